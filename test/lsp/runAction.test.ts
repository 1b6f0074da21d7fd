/**
 * The run rescale over LSP: a code action on the leak finding returns one WorkspaceEdit across
 * the training file and its sampling file; each edit is annotated (needs confirmation, the model
 * needs fine-tuning); the test client applies it and both files then check clean of the fixed
 * rules. A client without change annotations gets the same edit with the warning in the title.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { AnnotatedTextEdit, CodeAction, Diagnostic, TextDocumentEdit } from 'vscode-languageserver-protocol';
import { RUN_FIXED_RULES } from '../../server/src/fix/runRescale';
import { DEFAULT_CAPABILITIES, LspClient, fileUri } from './harness';
import { applyLspEdits, editsFor } from './edits';
import { analysePair, RUN_PAIRS } from '../run/pairs';

const pair = RUN_PAIRS[0]!;
let dir: string;
let trainUri: string;
let sampleUri: string;

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'noiselint-lsp-run-'));
  writeFileSync(join(dir, 'train-ft.yaml'), pair.train);
  writeFileSync(join(dir, 'sample-ft.yaml'), pair.sample);
  trainUri = fileUri(join(dir, 'train-ft.yaml'));
  sampleUri = fileUri(join(dir, 'sample-ft.yaml'));
});

afterAll(() => rmSync(dir, { recursive: true, force: true }));

async function leakActions(client: LspClient): Promise<CodeAction[]> {
  const since = client.diagnostics.length;
  client.open(trainUri, pair.train);
  const published = await client.waitForDiagnostics(trainUri, (p) => p.version === 1, since);
  const leak = published.diagnostics.find((d: Diagnostic) => d.code === 'terminal-snr-leak')!;
  expect(leak).toBeDefined();
  return client.request<CodeAction[]>('textDocument/codeAction', {
    textDocument: { uri: trainUri },
    range: leak.range,
    context: { diagnostics: [leak], only: ['quickfix'] },
  });
}

describe('run rescale code action', () => {
  let client: LspClient;
  beforeAll(async () => {
    const capabilities = {
      ...DEFAULT_CAPABILITIES,
      workspace: { ...DEFAULT_CAPABILITIES.workspace, workspaceEdit: { documentChanges: true, changeAnnotationSupport: { groupsOnLabel: true } } },
    };
    client = await LspClient.start({ workspaceFolders: [dir], capabilities });
  });
  afterAll(async () => client?.stop());

  it('spans both files, every edit annotated; applied by the client, the run checks clean of the fixed rules', async () => {
    const actions = await leakActions(client);
    const run = actions.find((a) => a.title.startsWith('Rescale the whole run to zero terminal SNR'))!;
    expect(run.title).toBe('Rescale the whole run to zero terminal SNR (2 files; needs fine-tuning)');
    const changes = run.edit!.documentChanges as TextDocumentEdit[];
    expect(changes.map((c) => c.textDocument.uri).sort()).toEqual([sampleUri, trainUri].sort());
    // The open training file is versioned; the sampling file on disk is not open (null).
    expect(changes.find((c) => c.textDocument.uri === trainUri)!.textDocument.version).toBe(1);
    expect(changes.find((c) => c.textDocument.uri === sampleUri)!.textDocument.version).toBeNull();
    for (const c of changes) for (const e of c.edits as AnnotatedTextEdit[]) expect(e.annotationId).toBe('noiselint.runRescale');
    const annotation = run.edit!.changeAnnotations!['noiselint.runRescale']!;
    expect(annotation.needsConfirmation).toBe(true);
    expect(annotation.label).toContain('The model needs fine-tuning');
    expect(annotation.description).toContain('Lin et al. 2023 fine-tune for this');

    const train = applyLspEdits(pair.train, editsFor(run.edit, trainUri));
    const sample = applyLspEdits(pair.sample, editsFor(run.edit, sampleUri));
    const after = analysePair(pair, train, sample);
    const fixed = [...after.train.findings, ...after.sample.findings].filter((f) => RUN_FIXED_RULES.includes(f.rule));
    expect(fixed).toEqual([]);
    // The client applies it to the open document: the server then finds no leak there.
    const since = client.diagnostics.length;
    client.replace(trainUri, 2, train);
    const published = await client.waitForDiagnostics(trainUri, (p) => p.version === 2, since);
    expect(published.diagnostics.map((d) => d.code).filter((c) => RUN_FIXED_RULES.includes(String(c)))).toEqual([]);
  });

  it('offers the sampling-only part alone, which leaves the training file untouched', async () => {
    const since = client.diagnostics.length;
    client.replace(trainUri, 3, pair.train);
    const published = await client.waitForDiagnostics(trainUri, (p) => p.version === 3, since);
    const leak = published.diagnostics.find((d) => d.code === 'terminal-snr-leak')!;
    const actions = await client.request<CodeAction[]>('textDocument/codeAction', {
      textDocument: { uri: trainUri },
      range: leak.range,
      context: { diagnostics: [leak], only: ['quickfix'] },
    });
    const samplingOnly = actions.find((a) => a.title.startsWith('Rescale the run: sampling-only changes'))!;
    expect(samplingOnly.title).toBe('Rescale the run: sampling-only changes (spacing, guidance rescale) (1 file)');
    expect(editsFor(samplingOnly.edit, trainUri)).toEqual([]);
    expect(editsFor(samplingOnly.edit, sampleUri).length).toBeGreaterThan(0);
  });

  it('the noiselint/runRescale request returns the same edit with the numbers and cautions', async () => {
    const result = await client.request<{ title: string; uris: string[]; numbers: string; cautions: string[]; needsRetraining: boolean }>(
      'noiselint/runRescale',
      { uri: sampleUri },
    );
    expect(result.uris.sort()).toEqual([sampleUri, trainUri].sort());
    expect(result.needsRetraining).toBe(true);
    expect(result.numbers).toMatch(/terminal SNR \(SNR_T\)\s+0\.004682\s+0\n/);
    expect(result.cautions[0]).toContain('must be fine-tuned');
  });
});

describe('run rescale without change annotations', () => {
  it('gets the same edit, with the warning in the title', async () => {
    const capabilities = { ...DEFAULT_CAPABILITIES, workspace: { ...DEFAULT_CAPABILITIES.workspace, workspaceEdit: { documentChanges: true } } };
    const client = await LspClient.start({ workspaceFolders: [dir], capabilities });
    try {
      const actions = await leakActions(client);
      const run = actions.find((a) => a.title.startsWith('Rescale the whole run to zero terminal SNR'))!;
      expect(run.title).toBe(
        'Rescale the whole run to zero terminal SNR (2 files) - The model needs fine-tuning after this change: until then sampling gives worse images, not better ones',
      );
      expect(run.edit!.changeAnnotations).toBeUndefined();
      const changes = run.edit!.documentChanges as TextDocumentEdit[];
      expect(changes).toHaveLength(2);
      for (const c of changes) for (const e of c.edits as AnnotatedTextEdit[]) expect(e.annotationId).toBeUndefined();
    } finally {
      await client.stop();
    }
  });
});
