/**
 * A TOML document over the real server process: diagnostics, hover, inlay hints and code actions
 * (their edits applied and read back), and the languageId fallback from the file name.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { CodeAction, Diagnostic, Hover, InlayHint, MarkupContent } from 'vscode-languageserver-protocol';
import { readFile } from '../../server/src/engine/api';
import { parseText } from '../../server/src/parse';
import { valueOf } from '../../server/src/setup/types';
import { LspClient } from './harness';
import { applyLspEdits, editsFor } from './edits';
import { lineOf, positionOf } from './fixtures';

const mem = (name: string) => `untitled:/lanternfish/${name}`;

const NIGHT_ARGS = `# Lanternfish Pictures: night storyboard fine-tune (TOML launcher arguments)
run_name = "lf-night-ft-016"

[noise_scheduler]
num_train_timesteps = 1000
beta_schedule = "scaled_linear"  # stock schedule
beta_start = 0.00085
beta_end = 0.012
prediction_type = "v_prediction"

[sampling]
num_inference_steps = 10
timestep_spacing = 'leading'
steps_offset = 1
`;

let client: LspClient;

beforeAll(async () => {
  client = await LspClient.start();
});

afterAll(async () => {
  await client?.stop();
});

async function openAndWait(name: string, text: string, languageId = 'toml') {
  const uri = mem(name);
  const since = client.diagnostics.length;
  client.open(uri, text, languageId);
  const published = await client.waitForDiagnostics(uri, (p) => p.version === 1, since);
  return { uri, published };
}

const codes = (diagnostics: Diagnostic[]) => diagnostics.map((d) => String(d.code)).sort();

describe('a TOML document in the language server', () => {
  it('publishes the findings at the TOML lines', async () => {
    const { published } = await openAndWait('night-args.toml', NIGHT_ARGS);
    expect(codes(published.diagnostics)).toEqual(['sampler-skips-last-step', 'terminal-snr-leak']);
    const leak = published.diagnostics.find((d) => d.code === 'terminal-snr-leak')!;
    expect(leak.range.start).toEqual({ line: lineOf(NIGHT_ARGS, 'beta_schedule'), character: 0 });
    expect(leak.range.end.character).toBe('beta_schedule = "scaled_linear"'.length);
    // Lin et al. 2023, Table 1 (recalled from memory): sqrt(abar_T) = 0.068265 for this schedule.
    expect(leak.message).toContain('0.068');
  });

  it('reads a .toml file as TOML even when the client names another language', async () => {
    const { published } = await openAndWait('plain-text-args.toml', NIGHT_ARGS, 'plaintext');
    expect(codes(published.diagnostics)).toEqual(['sampler-skips-last-step', 'terminal-snr-leak']);
  });

  it('reports a TOML syntax error of a config as a parse problem', async () => {
    const broken = NIGHT_ARGS.replace('beta_end = 0.012', 'beta_end = 0.012\nbeta_end = 0.02');
    const { published } = await openAndWait('broken-args.toml', broken);
    const parse = published.diagnostics.filter((d) => d.code === 'parse-error');
    expect(parse.length).toBe(1);
    expect(parse[0]!.range.start.line).toBe(lineOf(broken, 'beta_end = 0.02'));
  });

  it('hovers the schedule field with its numbers', async () => {
    const { uri } = await openAndWait('hover-args.toml', NIGHT_ARGS);
    const hover = await client.request<Hover | null>('textDocument/hover', {
      textDocument: { uri },
      position: positionOf(NIGHT_ARGS, 'beta_schedule', 3),
    });
    expect(hover).not.toBeNull();
    const content = hover!.contents as MarkupContent;
    // Lin et al. 2023, Table 1 (recalled from memory): sqrt(abar_T) 0.068265, SNR_T 0.004682.
    expect(content.value).toContain('0.0683');
    expect(content.value).toContain('4.68e-3');
    expect(hover!.range?.start.line).toBe(lineOf(NIGHT_ARGS, 'beta_schedule'));
  });

  it('puts inlay hints after the TOML values', async () => {
    const { uri } = await openAndWait('hints-args.toml', NIGHT_ARGS);
    const hints = await client.request<InlayHint[]>('textDocument/inlayHint', {
      textDocument: { uri },
      range: { start: { line: 0, character: 0 }, end: { line: 100, character: 0 } },
    });
    const labels = hints.map((h) => ({ line: h.position.line, label: String(h.label) }));
    // Lin et al. 2023, Table 1 (recalled from memory): SNR_T = 0.004682.
    expect(labels).toContainEqual({ line: lineOf(NIGHT_ARGS, 'beta_schedule'), label: 'SNR_T 4.7e-3' });
    // Lin et al. 2023, Table 2 (recalled from memory): leading, N = 10, offset 1 starts at 901.
    expect(labels).toContainEqual({ line: lineOf(NIGHT_ARGS, 'timestep_spacing'), label: 'starts at 901/999' });
  });

  it('offers quick fixes whose edits keep TOML valid and read back as asked', async () => {
    const { uri, published } = await openAndWait('actions-args.toml', NIGHT_ARGS);
    const skip = published.diagnostics.find((d) => d.code === 'sampler-skips-last-step')!;
    const actions = await client.request<CodeAction[]>('textDocument/codeAction', {
      textDocument: { uri },
      range: skip.range,
      context: { diagnostics: [skip], only: ['quickfix'] },
    });
    const preferred = actions.find((a) => a.isPreferred)!;
    expect(preferred.title).toBe('Set the timestep spacing to trailing (sampling only)');
    const fixed = applyLspEdits(NIGHT_ARGS, editsFor(preferred.edit, uri));
    expect(fixed).toBe(NIGHT_ARGS.replace("timestep_spacing = 'leading'", "timestep_spacing = 'trailing'"));

    const leak = published.diagnostics.find((d) => d.code === 'terminal-snr-leak')!;
    const leakActions = await client.request<CodeAction[]>('textDocument/codeAction', {
      textDocument: { uri },
      range: leak.range,
      context: { diagnostics: [leak], only: ['quickfix'] },
    });
    expect(leakActions.length).toBeGreaterThanOrEqual(1);
    const rescaled = applyLspEdits(NIGHT_ARGS, editsFor(leakActions[0]!.edit, uri));
    expect(parseText(rescaled, 'toml').problems).toEqual([]);
    expect(rescaled).toContain('prediction_type = "v_prediction"\nrescale_betas_zero_snr = true\n\n[sampling]');
    const doc = readFile(rescaled, { path: 'actions-args.toml' }).documents[0]!;
    expect(valueOf(doc.setup, 'zeroTerminalSnr')).toBe(true);
    // Lin et al. 2023, Algorithm 1: the rescaled schedule has SNR_T = 0 exactly.
    expect(doc.analysis.schedule?.terminalSnr).toBe(0);
  });
});
