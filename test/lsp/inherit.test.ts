/**
 * The language server reads a sampling-only file with its training partner's schedule and
 * target, and reads it again when the training file is edited: diagnostics, hover and inlay
 * hints follow the partner.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Hover, InlayHint, MarkupContent } from 'vscode-languageserver-protocol';
import { LspClient, fileUri } from './harness';
import { positionOf } from './fixtures';

const TRAIN = `# Lanternfish Pictures: high-key product stills model (training)
noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  rescale_betas_zero_snr: true
  prediction_type: v_prediction
training:
  resolution: 1024
`;

const SAMPLE = `# Lanternfish Pictures: product stills previews
sampling:
  num_inference_steps: 30
  timestep_spacing: trailing
  guidance_scale: 7.5
`;

let dir: string;
let client: LspClient;
let trainUri: string;
let sampleUri: string;

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'noiselint-lsp-inherit-'));
  writeFileSync(join(dir, 'train-stills.yaml'), TRAIN);
  writeFileSync(join(dir, 'sample-stills.yaml'), SAMPLE);
  trainUri = fileUri(join(dir, 'train-stills.yaml'));
  sampleUri = fileUri(join(dir, 'sample-stills.yaml'));
  client = await LspClient.start({ workspaceFolders: [dir] });
});

afterAll(async () => {
  await client?.stop();
  rmSync(dir, { recursive: true, force: true });
});

const hints = () =>
  client.request<InlayHint[]>('textDocument/inlayHint', {
    textDocument: { uri: sampleUri },
    range: { start: { line: 0, character: 0 }, end: { line: 10, character: 0 } },
  });
const label = (h: InlayHint) => (typeof h.label === 'string' ? h.label : h.label.map((p) => p.value).join(''));

describe('inherited schedule over LSP', () => {
  it('analyses the sampling file with the training schedule, and hover and hints say so', async () => {
    const since = client.diagnostics.length;
    client.open(sampleUri, SAMPLE);
    const published = await client.waitForDiagnostics(sampleUri, (p) => p.version === 1, since);
    // 7.5 guidance on the inherited zero-SNR schedule, and no mismatch on what the file never wrote.
    expect(published.diagnostics.map((d) => d.code)).toEqual(['guidance-overexposure']);
    expect((await hints()).map(label)).toContain('SNR_T 0 from train-stills.yaml');
    const hover = await client.request<Hover>('textDocument/hover', {
      textDocument: { uri: sampleUri },
      position: positionOf(SAMPLE, 'trailing', 2),
    });
    const text = (hover.contents as MarkupContent).value;
    expect(text).toContain('(from training file train-stills.yaml)');
    expect(text).toContain('zeroTerminalSnr true');
  });

  it('follows an edit of the training file: the inherited values change with it', async () => {
    let since = client.diagnostics.length;
    client.open(trainUri, TRAIN);
    await client.waitForDiagnostics(trainUri, (p) => p.version === 1, since);
    since = client.diagnostics.length;
    // Without the rescale the schedule leaks (sqrt(abar_T) = 0.068, Lin et al. 2023, Table 1):
    // guidance no longer over-exposes, and the hint shows SNR_T 4.7e-3.
    client.replace(trainUri, 2, TRAIN.replace('  rescale_betas_zero_snr: true\n', ''));
    const after = await client.waitForDiagnostics(sampleUri, (p) => !p.diagnostics.some((d) => d.code === 'guidance-overexposure'), since);
    expect(after.diagnostics).toEqual([]);
    expect((await hints()).map(label)).toContain('SNR_T 4.7e-3 from train-stills.yaml');
  });
});
