/**
 * Pull diagnostics (textDocument/diagnostic) when the client declares support: nothing is pushed,
 * unchanged results are reported as such, and a configuration change asks the client to refresh.
 * The same client accepts only plain-text hovers.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { ClientCapabilities, DocumentDiagnosticReport, Hover, MarkupContent } from 'vscode-languageserver-protocol';
import { DEFAULT_CAPABILITIES, LspClient } from './harness';
import { TRAIN_LEAKY, positionOf } from './fixtures';

const PULL_CAPABILITIES: ClientCapabilities = {
  ...DEFAULT_CAPABILITIES,
  textDocument: {
    ...DEFAULT_CAPABILITIES.textDocument,
    diagnostic: { dynamicRegistration: false, relatedDocumentSupport: false },
    hover: { contentFormat: ['plaintext'] },
  },
  workspace: { ...DEFAULT_CAPABILITIES.workspace, diagnostics: { refreshSupport: true } },
};

let client: LspClient;
let severity = 'warning';

beforeAll(async () => {
  client = await LspClient.start({ capabilities: PULL_CAPABILITIES, settings: () => ({ rules: { 'terminal-snr-leak': severity } }) });
});

afterAll(async () => {
  await client?.stop();
});

type Full = Extract<DocumentDiagnosticReport, { kind: 'full' }>;

describe('pull diagnostics', () => {
  it('declares a diagnostic provider', () => {
    expect(client.initializeResult.capabilities.diagnosticProvider).toMatchObject({ interFileDependencies: true, workspaceDiagnostics: false });
  });

  it('answers pulls, reports unchanged results, and never pushes', async () => {
    const uri = 'untitled:/lanternfish/pulled.yaml';
    client.open(uri, TRAIN_LEAKY);
    const first = (await client.request<DocumentDiagnosticReport>('textDocument/diagnostic', { textDocument: { uri } })) as Full;
    expect(first.kind).toBe('full');
    expect(first.items.map((d) => d.code)).toContain('terminal-snr-leak');
    expect(typeof first.resultId).toBe('string');

    const again = await client.request<DocumentDiagnosticReport>('textDocument/diagnostic', {
      textDocument: { uri },
      previousResultId: first.resultId,
    });
    expect(again.kind).toBe('unchanged');

    client.replace(uri, 2, TRAIN_LEAKY.replace('prediction_type: epsilon', 'prediction_type: epsilon\n  rescale_betas_zero_snr: true'));
    const second = (await client.request<DocumentDiagnosticReport>('textDocument/diagnostic', {
      textDocument: { uri },
      previousResultId: first.resultId,
    })) as Full;
    expect(second.kind).toBe('full');
    expect(second.items.map((d) => d.code)).toEqual(['epsilon-at-zero-snr']);

    // The server announces the re-analysis (plotChanged) where it would otherwise have published.
    await client.waitUntil(() => client.plotChanged.filter((u) => u === uri).length >= 2, 'plotChanged after the edit');
    expect(client.publicationsFor(uri)).toEqual([]);
  });

  it('asks the client to refresh after a configuration change', async () => {
    const uri = 'untitled:/lanternfish/pulled-config.yaml';
    client.open(uri, TRAIN_LEAKY);
    const before = (await client.request<DocumentDiagnosticReport>('textDocument/diagnostic', { textDocument: { uri } })) as Full;
    expect(before.items.find((d) => d.code === 'terminal-snr-leak')?.severity).toBe(2);
    const refreshes = client.diagnosticRefreshes;
    severity = 'error';
    client.notify('workspace/didChangeConfiguration', { settings: null });
    await client.waitUntil(() => client.diagnosticRefreshes > refreshes, 'workspace/diagnostic/refresh');
    const after = (await client.request<DocumentDiagnosticReport>('textDocument/diagnostic', {
      textDocument: { uri },
      previousResultId: before.resultId,
    })) as Full;
    expect(after.kind).toBe('full');
    expect(after.items.find((d) => d.code === 'terminal-snr-leak')?.severity).toBe(1);
  });

  it('gives plain-text hovers to a client without markdown', async () => {
    const uri = 'untitled:/lanternfish/plain-hover.yaml';
    client.open(uri, TRAIN_LEAKY);
    const hover = await client.request<Hover | null>('textDocument/hover', {
      textDocument: { uri },
      position: positionOf(TRAIN_LEAKY, 'beta_end', 2),
    });
    const content = hover!.contents as MarkupContent;
    expect(content.kind).toBe('plaintext');
    // Lin et al. 2023, Table 1 (recalled from memory): sqrt(abar_T) 0.068265, SNR_T 0.004682.
    expect(content.value).toMatch(/terminal SNR \(SNR_T\)\s+4\.68e-3\s+0/);
    expect(content.value).toContain('0.0683');
    expect(content.value).not.toContain('data:image');
  });
});
