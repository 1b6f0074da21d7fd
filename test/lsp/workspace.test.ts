/**
 * Workspace behaviour of the language server: the start-up scan with progress, training/sampling
 * pairing across files (train-sample-mismatch on the sampling file, cleared when the training
 * file changes, in the editor or on disk), watched files, project files and configuration changes.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DiagnosticSeverity, FileChangeType, type Diagnostic } from 'vscode-languageserver-protocol';
import { LspClient, fileUri } from './harness';
import { lineOf } from './fixtures';

/** Lanternfish Pictures: the v-prediction night model, trained with the zero-SNR rescale. */
const TRAIN = `# Lanternfish Pictures: night storyboard model (training)
noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  rescale_betas_zero_snr: true
  prediction_type: v_prediction
training:
  learning_rate: 0.00001
  resolution: 768
`;

/** The matching sampler, except that it still says epsilon. */
const SAMPLE = `# Lanternfish Pictures: night storyboard sampler
noise_scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  rescale_betas_zero_snr: true
  prediction_type: epsilon
  timestep_spacing: trailing
sampling:
  num_inference_steps: 30
  guidance_scale: 7.5
  guidance_rescale: 0.7
`;

let dir: string;
let client: LspClient;
let trainPath: string;
let samplePath: string;
let trainUri: string;
let sampleUri: string;
let editorRules: Record<string, string> = {};

const codes = (ds: Diagnostic[]) => ds.map((d) => String(d.code));

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'noiselint-lsp-ws-'));
  trainPath = join(dir, 'train-night.yaml');
  samplePath = join(dir, 'sample-night.yaml');
  writeFileSync(trainPath, TRAIN);
  writeFileSync(samplePath, SAMPLE);
  writeFileSync(join(dir, 'render-queue.yaml'), 'jobs:\n  - name: storyboard-night-041\n');
  trainUri = fileUri(trainPath);
  sampleUri = fileUri(samplePath);
  client = await LspClient.start({ workspaceFolders: [dir], settings: () => ({ rules: editorRules }) });
});

afterAll(async () => {
  await client?.stop();
  rmSync(dir, { recursive: true, force: true });
});

describe('workspace', () => {
  it('scans the folder at start-up with work-done progress', async () => {
    await client.waitUntil(
      () => client.progress.some((p) => (p as { value?: { kind?: string } }).value?.kind === 'end'),
      'the end of the indexing progress',
    );
    expect(client.progressCreated).toHaveLength(1);
    const kinds = client.progress.map((p) => (p as { value: { kind: string } }).value.kind);
    expect(kinds[0]).toBe('begin');
    expect(kinds[kinds.length - 1]).toBe('end');
  });

  it('reports train-sample-mismatch on the sampling file, linked to the training file', async () => {
    const since = client.diagnostics.length;
    client.open(sampleUri, SAMPLE);
    const published = await client.waitForDiagnostics(sampleUri, (p) => p.version === 1, since);
    const mismatch = published.diagnostics.find((d) => d.code === 'train-sample-mismatch');
    expect(mismatch).toBeDefined();
    expect(mismatch!.severity).toBe(DiagnosticSeverity.Error);
    expect(mismatch!.range.start.line).toBe(lineOf(SAMPLE, 'prediction_type'));
    expect(mismatch!.message).toContain('train-night.yaml');
    const related = mismatch!.relatedInformation ?? [];
    expect(related).toHaveLength(1);
    expect(related[0]!.location.uri).toBe(trainUri);
    expect(related[0]!.location.range.start.line).toBe(lineOf(TRAIN, 'prediction_type'));
  });

  it('re-checks the sampling file when the training file is edited, saved or closed', async () => {
    // The training file, opened and edited (unsaved) to epsilon: now both agree.
    let since = client.diagnostics.length;
    client.open(trainUri, TRAIN);
    await client.waitForDiagnostics(trainUri, (p) => p.version === 1, since);
    since = client.diagnostics.length;
    client.replace(trainUri, 2, TRAIN.replace('prediction_type: v_prediction', 'prediction_type: epsilon'));
    const agreed = await client.waitForDiagnostics(sampleUri, (p) => !codes(p.diagnostics).includes('train-sample-mismatch'), since);
    // What remains is the sampling file's own problem: epsilon on a zero-SNR schedule.
    expect(codes(agreed.diagnostics)).toEqual(['epsilon-at-zero-snr']);

    // Closing the unsaved training file: the disk copy (v_prediction) speaks again.
    since = client.diagnostics.length;
    client.close(trainUri);
    const again = await client.waitForDiagnostics(sampleUri, (p) => codes(p.diagnostics).includes('train-sample-mismatch'), since);
    expect(again.uri).toBe(sampleUri);

    // The training file changes on disk: the watcher notification re-checks the pair.
    writeFileSync(trainPath, TRAIN.replace('prediction_type: v_prediction', 'prediction_type: epsilon'));
    since = client.diagnostics.length;
    client.notify('workspace/didChangeWatchedFiles', { changes: [{ uri: trainUri, type: FileChangeType.Changed }] });
    const cleared = await client.waitForDiagnostics(sampleUri, (p) => !codes(p.diagnostics).includes('train-sample-mismatch'), since);
    expect(codes(cleared.diagnostics)).toEqual(['epsilon-at-zero-snr']);

    writeFileSync(trainPath, TRAIN);
    since = client.diagnostics.length;
    client.notify('workspace/didChangeWatchedFiles', { changes: [{ uri: trainUri, type: FileChangeType.Changed }] });
    const back = await client.waitForDiagnostics(sampleUri, (p) => codes(p.diagnostics).includes('train-sample-mismatch'), since);
    expect(back.version).toBe(1);
  });

  it('offers the fix that aligns the sampling file with training', async () => {
    const latest = client.publicationsFor(sampleUri).at(-1)!;
    const mismatch = latest.diagnostics.find((d) => d.code === 'train-sample-mismatch')!;
    const actions = await client.request<{ title: string; edit: { documentChanges: { edits: { newText: string }[] }[] } }[]>(
      'textDocument/codeAction',
      { textDocument: { uri: sampleUri }, range: mismatch.range, context: { diagnostics: [mismatch], only: ['quickfix'] } },
    );
    expect(actions).toHaveLength(1);
    expect(actions[0]!.edit.documentChanges[0]!.edits.map((e) => e.newText).join('')).toContain('v_prediction');
  });

  it('refreshes every document when the configuration changes', async () => {
    editorRules = { 'train-sample-mismatch': 'warning' };
    let since = client.diagnostics.length;
    client.notify('workspace/didChangeConfiguration', { settings: null });
    const mismatchSeverity = (p: { diagnostics: Diagnostic[] }) => p.diagnostics.find((d) => d.code === 'train-sample-mismatch')?.severity;
    const warned = await client.waitForDiagnostics(sampleUri, (p) => mismatchSeverity(p) !== DiagnosticSeverity.Error, since);
    expect(mismatchSeverity(warned)).toBe(DiagnosticSeverity.Warning);

    editorRules = {};
    since = client.diagnostics.length;
    client.notify('workspace/didChangeConfiguration', { settings: null });
    const restored = await client.waitForDiagnostics(sampleUri, (p) => mismatchSeverity(p) !== DiagnosticSeverity.Warning, since);
    expect(mismatchSeverity(restored)).toBe(DiagnosticSeverity.Error);
  });

  it('honours a project file, and editor settings override its rules', async () => {
    const projectPath = join(dir, 'noiselint.project.yaml');
    writeFileSync(projectPath, '# Lanternfish Pictures project settings\nrules:\n  train-sample-mismatch: off\n');
    let since = client.diagnostics.length;
    client.notify('workspace/didChangeWatchedFiles', { changes: [{ uri: fileUri(projectPath), type: FileChangeType.Created }] });
    const off = await client.waitForDiagnostics(sampleUri, (p) => !codes(p.diagnostics).includes('train-sample-mismatch'), since);
    expect(codes(off.diagnostics)).toEqual(['epsilon-at-zero-snr']);

    editorRules = { 'train-sample-mismatch': 'info' };
    since = client.diagnostics.length;
    client.notify('workspace/didChangeConfiguration', { settings: null });
    const info = await client.waitForDiagnostics(sampleUri, (p) => codes(p.diagnostics).includes('train-sample-mismatch'), since);
    expect(info.diagnostics.find((d) => d.code === 'train-sample-mismatch')?.severity).toBe(DiagnosticSeverity.Information);

    editorRules = {};
    rmSync(projectPath);
    since = client.diagnostics.length;
    client.notify('workspace/didChangeWatchedFiles', { changes: [{ uri: fileUri(projectPath), type: FileChangeType.Deleted }] });
    const back = await client.waitForDiagnostics(sampleUri, (p) => codes(p.diagnostics).includes('train-sample-mismatch'), since);
    expect(back.uri).toBe(sampleUri);
  });

  it('skips files the editor settings exclude', async () => {
    const before = client.settings;
    client.settings = () => ({ files: { exclude: ['sample-*.yaml'] } });
    let since = client.diagnostics.length;
    client.notify('workspace/didChangeConfiguration', { settings: null });
    const skipped = await client.waitForDiagnostics(sampleUri, (p) => p.diagnostics.length === 0, since);
    expect(skipped.version).toBe(1);
    client.settings = () => ({ files: { include: ['train-*.yaml'] } });
    since = client.diagnostics.length;
    client.notify('workspace/didChangeConfiguration', { settings: null });
    const notIncluded = await client.waitForDiagnostics(sampleUri, () => true, since);
    expect(notIncluded.diagnostics).toEqual([]);
    client.settings = before;
    since = client.diagnostics.length;
    client.notify('workspace/didChangeConfiguration', { settings: null });
    const back = await client.waitForDiagnostics(sampleUri, (p) => p.diagnostics.length > 0, since);
    expect(codes(back.diagnostics)).toContain('train-sample-mismatch');
  });

  it('turns checking off with noiselint.enable', async () => {
    const before = client.settings;
    client.settings = () => ({ enable: false });
    let since = client.diagnostics.length;
    client.notify('workspace/didChangeConfiguration', { settings: null });
    const off = await client.waitForDiagnostics(sampleUri, (p) => p.diagnostics.length === 0, since);
    expect(off.version).toBe(1);
    client.settings = before;
    since = client.diagnostics.length;
    client.notify('workspace/didChangeConfiguration', { settings: null });
    const on = await client.waitForDiagnostics(sampleUri, (p) => p.diagnostics.length > 0, since);
    expect(codes(on.diagnostics)).toContain('train-sample-mismatch');
  });
});
