/**
 * The language server over stdio, driven by a real LSP client: capabilities, pushed diagnostics
 * through open / change / close, hover numbers, inlay hints, code lens, the custom requests, code
 * actions applied to the text, fix-all, and robustness against bad requests.
 */
import { spawnSync } from 'node:child_process';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  DiagnosticSeverity,
  ErrorCodes,
  type CodeAction,
  type CodeLens,
  type Diagnostic,
  type Hover,
  type InlayHint,
  type MarkupContent,
} from 'vscode-languageserver-protocol';
import { readFile } from '../../server/src/engine/api';
import { valueOf } from '../../server/src/setup/types';
import type { DocumentSummary, PlotData } from '../../server/src/base/protocol';
import { LspClient } from './harness';
import { REPO_ROOT, ensureServerBuilt } from './buildServer';
import { applyLspEdits, editsFor } from './edits';
import { BROKEN_CONFIG, NOT_A_CONFIG, SAMPLE_LEADING, TRAIN_LEAKY, lineOf, positionOf } from './fixtures';

/** Untitled-style URIs: these tests need no files on disk. */
const mem = (name: string) => `untitled:/lanternfish/${name}`;

let client: LspClient;

beforeAll(async () => {
  client = await LspClient.start({
    // A VS Code family client: hovers carry the embedded chart (lsp/hoverImages.ts).
    clientInfo: { name: 'Visual Studio Code', version: '1.99.0' },
    settings: (scopeUri) => {
      if (scopeUri?.endsWith('strict-train.yaml')) return { rules: { 'terminal-snr-leak': 'error' } };
      if (scopeUri?.endsWith('quiet-train.yaml')) return { rules: { 'terminal-snr-leak': 'off' } };
      if (scopeUri?.endsWith('custom-docs.yaml')) return { docsBaseUrl: 'https://docs.lanternfish.example/rules' };
      return {};
    },
  });
});

afterAll(async () => {
  await client?.stop();
});

function codes(diagnostics: Diagnostic[]): string[] {
  return diagnostics.map((d) => String(d.code)).sort();
}

async function openAndWait(name: string, text: string, languageId = 'yaml') {
  const uri = mem(name);
  const since = client.diagnostics.length;
  client.open(uri, text, languageId);
  const published = await client.waitForDiagnostics(uri, (p) => p.version === 1, since);
  return { uri, published };
}

describe('initialize', () => {
  it('declares the features and registers file watchers and configuration', async () => {
    const caps = client.initializeResult.capabilities;
    expect(client.initializeResult.serverInfo?.name).toBe('noiselint');
    expect(caps.textDocumentSync).toMatchObject({ openClose: true, change: 2 });
    expect(caps.hoverProvider).toBe(true);
    expect(caps.codeActionProvider).toMatchObject({ codeActionKinds: expect.arrayContaining(['quickfix', 'source.fixAll.noiselint']) });
    expect(caps.inlayHintProvider).toBeTruthy();
    expect(caps.codeLensProvider).toBeTruthy();
    // The client declared no pull support: diagnostics are pushed.
    expect(caps.diagnosticProvider).toBeUndefined();
    await client.waitUntil(() => client.registrations.length >= 2, 'registrations');
    const watch = client.registrations.find((r) => r.method === 'workspace/didChangeWatchedFiles');
    const globs = (watch?.registerOptions as { watchers: { globPattern: string }[] }).watchers.map((w) => w.globPattern);
    expect(globs).toContain('**/*.{yaml,yml,json,jsonc,toml}');
    expect(globs.some((g) => g.includes('noiselint.project'))).toBe(true);
    expect(client.registrations.some((r) => r.method === 'workspace/didChangeConfiguration')).toBe(true);
  });
});

describe('diagnostics', () => {
  it('reports a leaking schedule on open, with code, link, severity and data', async () => {
    const { published } = await openAndWait('train-leaky.yaml', TRAIN_LEAKY);
    const leak = published.diagnostics.find((d) => d.code === 'terminal-snr-leak');
    expect(leak).toBeDefined();
    expect(leak!.source).toBe('noiselint');
    expect(leak!.severity).toBe(DiagnosticSeverity.Warning);
    // No https docs base configured: no link (a file:// path of this machine means nothing elsewhere).
    expect(leak!.codeDescription).toBeUndefined();
    expect(leak!.range.start.line).toBe(lineOf(TRAIN_LEAKY, 'beta_schedule'));
    // Lin et al. 2023, Table 1 (recalled from memory): sqrt(abar_T) = 0.068265, SNR_T = 0.004682.
    expect(leak!.message).toMatch(/0\.068\b/);
    expect(leak!.message).toMatch(/4\.7e-3/);
    expect(leak!.data).toMatchObject({ version: 1, rule: 'terminal-snr-leak' });
  });

  it('follows changes and clears on close', async () => {
    const uri = mem('train-edited.yaml');
    let since = client.diagnostics.length;
    client.open(uri, TRAIN_LEAKY);
    const first = await client.waitForDiagnostics(uri, (p) => p.version === 1, since);
    expect(codes(first.diagnostics)).toContain('terminal-snr-leak');

    // Rescale to zero terminal SNR: the leak goes, and the epsilon target now divides by zero.
    since = client.diagnostics.length;
    const rescaled = TRAIN_LEAKY.replace('  prediction_type: epsilon\n', '  prediction_type: epsilon\n  rescale_betas_zero_snr: true\n');
    client.replace(uri, 2, rescaled);
    const second = await client.waitForDiagnostics(uri, (p) => p.version === 2, since);
    expect(codes(second.diagnostics)).not.toContain('terminal-snr-leak');
    const eps = second.diagnostics.find((d) => d.code === 'epsilon-at-zero-snr');
    expect(eps?.severity).toBe(DiagnosticSeverity.Error);

    since = client.diagnostics.length;
    client.close(uri);
    const cleared = await client.waitForDiagnostics(uri, () => true, since);
    expect(cleared.diagnostics).toEqual([]);
  });

  it('applies an incremental edit to the right place', async () => {
    const uri = mem('train-incremental.yaml');
    let since = client.diagnostics.length;
    client.open(uri, TRAIN_LEAKY);
    await client.waitForDiagnostics(uri, (p) => p.version === 1, since);
    // Replace beta_end "0.012" by "1.5": a beta outside (0, 1], so no schedule and no leak.
    const start = positionOf(TRAIN_LEAKY, '0.012');
    since = client.diagnostics.length;
    client.edit(uri, 2, { start, end: { line: start.line, character: start.character + 5 } }, '1.5');
    const next = await client.waitForDiagnostics(uri, (p) => p.version === 2, since);
    expect(codes(next.diagnostics)).toEqual(['schedule-invalid']);
    expect(next.diagnostics[0]!.message).toContain('1.5');
    expect(next.diagnostics[0]!.range.start).toEqual({ line: start.line, character: start.character - 'beta_end: '.length });
    client.close(uri);
  });

  it('gives files that are not diffusion configs an empty list', async () => {
    const { published } = await openAndWait('render-queue.yaml', NOT_A_CONFIG);
    expect(published.diagnostics).toEqual([]);
  });

  it('shows parse problems of a config as diagnostics', async () => {
    const { published } = await openAndWait('broken-train.yaml', BROKEN_CONFIG);
    const parse = published.diagnostics.filter((d) => d.code === 'parse-error');
    expect(parse.length).toBeGreaterThan(0);
    expect(parse[0]!.severity).toBe(DiagnosticSeverity.Error);
    expect(parse[0]!.range.start.line).toBe(lineOf(BROKEN_CONFIG, 'beta_start'));
  });

  it('reads JSON documents too', async () => {
    const json = JSON.stringify(
      {
        run: 'lanternfish-stills-json',
        scheduler: { num_train_timesteps: 1000, beta_schedule: 'scaled_linear', beta_start: 0.00085, beta_end: 0.012 },
      },
      null,
      2,
    );
    const { published } = await openAndWait('stills.json', json, 'json');
    expect(codes(published.diagnostics)).toContain('terminal-snr-leak');
  });

  it('honours per-document rule severities from the editor settings', async () => {
    const strict = await openAndWait('strict-train.yaml', TRAIN_LEAKY);
    expect(strict.published.diagnostics.find((d) => d.code === 'terminal-snr-leak')?.severity).toBe(DiagnosticSeverity.Error);
    const quiet = await openAndWait('quiet-train.yaml', TRAIN_LEAKY);
    expect(codes(quiet.published.diagnostics)).not.toContain('terminal-snr-leak');
    const custom = await openAndWait('custom-docs.yaml', TRAIN_LEAKY);
    expect(custom.published.diagnostics.find((d) => d.code === 'terminal-snr-leak')?.codeDescription?.href).toBe(
      'https://docs.lanternfish.example/rules/terminal-snr-leak.md',
    );
  });
});

describe('hover', () => {
  it('shows the terminal numbers, the rescale and a chart on the schedule field', async () => {
    const { uri } = await openAndWait('hover-train.yaml', TRAIN_LEAKY);
    const hover = await client.request<Hover | null>('textDocument/hover', {
      textDocument: { uri },
      position: positionOf(TRAIN_LEAKY, 'beta_schedule', 3),
    });
    expect(hover).not.toBeNull();
    const content = hover!.contents as MarkupContent;
    expect(content.kind).toBe('markdown');
    // Lin et al. 2023, Table 1 (recalled from memory): sqrt(abar_T) 0.068265, SNR_T 0.004682.
    expect(content.value).toContain('0.0683');
    expect(content.value).toContain('4.68e-3');
    // The rescaled column: zero terminal SNR (Lin et al. 2023, Algorithm 1).
    expect(content.value).toMatch(/rescaled to zero SNR/);
    expect(content.value).toMatch(/needs fine-tuning/);
    const image = /!\[[^\]]*\]\(data:image\/svg\+xml;base64,([A-Za-z0-9+/=]+)\)/.exec(content.value);
    expect(image).not.toBeNull();
    const svg = Buffer.from(image![1]!, 'base64').toString('utf8');
    expect(svg.startsWith('<svg')).toBe(true);
    expect(svg.match(/<polyline/g)?.length).toBe(2);
    expect(hover!.range?.start.line).toBe(lineOf(TRAIN_LEAKY, 'beta_schedule'));
  });

  it('shows the sampling timesteps on the spacing field', async () => {
    const { uri } = await openAndWait('hover-sample.yaml', SAMPLE_LEADING);
    const hover = await client.request<Hover | null>('textDocument/hover', {
      textDocument: { uri },
      position: positionOf(SAMPLE_LEADING, 'leading', 2),
    });
    const value = (hover!.contents as MarkupContent).value;
    // Lin et al. 2023, Table 2 (recalled from memory): leading, T = 1000, N = 10 starts at 901 and ends at 1.
    expect(value).toContain('First timestep 901 of 999');
    expect(value).toContain('last 1;');
    expect(value).toMatch(/901, 801, 701/);
  });

  it('explains guidance and target fields on a zero-SNR schedule', async () => {
    const text = `# Lanternfish Pictures: high-key product stills sampler
scheduler:
  num_train_timesteps: 1000
  beta_schedule: scaled_linear
  beta_start: 0.00085
  beta_end: 0.012
  rescale_betas_zero_snr: true
  prediction_type: epsilon
  timestep_spacing: trailing
  num_inference_steps: 25
  guidance_scale: 7.5
`;
    const { uri } = await openAndWait('hover-guidance.yaml', text);
    const at = async (needle: string) =>
      (
        (await client.request<Hover>('textDocument/hover', { textDocument: { uri }, position: positionOf(text, needle, 2) }))
          .contents as MarkupContent
      ).value;
    const guidance = await at('guidance_scale');
    expect(guidance).toContain('Guidance scale 7.5, guidance rescale not set');
    // Guidance 7.5 with rescale 0.7 works well (common practice).
    expect(guidance).toContain('common practice: rescale 0.7');
    const target = await at('prediction_type');
    expect(target).toMatch(/undefined at the last step \(abar = 0\)/);
    // Already rescaled: no rescaled column, SNR_T is 0 (Lin et al. 2023, Algorithm 1).
    expect(target).not.toContain('rescaled to zero SNR |');
    expect(target).toMatch(/\| terminal SNR \(SNR_T\) \| 0 \|/);
    // Trailing with N = 25 starts at the last step, 999 (Lin et al. 2023, Table 2, trailing row).
    expect(target).toContain('First timestep 999 of 999 (the last training step)');
  });

  it('says nothing on keys that are not schedule, target, spacing or guidance fields', async () => {
    const { uri } = await openAndWait('hover-none.yaml', TRAIN_LEAKY);
    const hover = await client.request<Hover | null>('textDocument/hover', { textDocument: { uri }, position: positionOf(TRAIN_LEAKY, 'run:', 1) });
    expect(hover).toBeNull();
  });
});

describe('inlay hints and code lens', () => {
  it('puts SNR_T after the schedule field and the first timestep after the spacing field', async () => {
    const { uri } = await openAndWait('hints-sample.yaml', SAMPLE_LEADING);
    const hints = await client.request<InlayHint[]>('textDocument/inlayHint', {
      textDocument: { uri },
      range: { start: { line: 0, character: 0 }, end: { line: 100, character: 0 } },
    });
    const labels = hints.map((h) => ({ line: h.position.line, label: String(h.label) }));
    // Lin et al. 2023, Table 1 (recalled from memory): SNR_T = 0.004682 for scaled linear 0.00085 -> 0.012.
    expect(labels).toContainEqual({ line: lineOf(SAMPLE_LEADING, 'beta_schedule'), label: 'SNR_T 4.7e-3' });
    // Lin et al. 2023, Table 2 (recalled from memory): leading with N = 10 starts at 901 (0-based, offset 1).
    expect(labels).toContainEqual({ line: lineOf(SAMPLE_LEADING, 'timestep_spacing'), label: 'starts at 901/999' });
    const spacingHint = hints.find((h) => String(h.label).startsWith('starts at'))!;
    expect(spacingHint.position.character).toBe(positionOf(SAMPLE_LEADING, 'leading', 'leading'.length).character);
  });

  it('returns only the hints inside the requested range', async () => {
    const { uri } = await openAndWait('hints-range.yaml', SAMPLE_LEADING);
    const line = lineOf(SAMPLE_LEADING, 'timestep_spacing');
    const hints = await client.request<InlayHint[]>('textDocument/inlayHint', {
      textDocument: { uri },
      range: { start: { line, character: 0 }, end: { line, character: 200 } },
    });
    expect(hints.map((h) => String(h.label))).toEqual(['starts at 901/999']);
  });

  it('offers "Show noise schedule" on the first schedule field', async () => {
    const { uri } = await openAndWait('lens-train.yaml', TRAIN_LEAKY);
    const lenses = await client.request<CodeLens[]>('textDocument/codeLens', { textDocument: { uri } });
    expect(lenses).toHaveLength(1);
    expect(lenses[0]!.command).toEqual({ title: 'Show noise schedule', command: 'noiselint.showSchedule', arguments: [uri] });
    expect(lenses[0]!.range.start.line).toBe(lineOf(TRAIN_LEAKY, 'num_train_timesteps'));
    const none = await openAndWait('lens-none.yaml', NOT_A_CONFIG);
    expect(await client.request<CodeLens[]>('textDocument/codeLens', { textDocument: { uri: none.uri } })).toEqual([]);
  });
});

describe('custom requests', () => {
  it('serves plot data: curves, the rescaled curve and the sampled steps', async () => {
    const { uri } = await openAndWait('plot-sample.yaml', SAMPLE_LEADING);
    const plot = await client.request<PlotData | null>('noiselint/plotData', { uri });
    expect(plot?.uri).toBe(uri);
    expect(plot?.version).toBe(1);
    const doc = plot!.documents[0]!;
    expect(doc.trainSteps).toBe(1000);
    expect(doc.t).toHaveLength(1000);
    expect(doc.t[999]).toBe(999);
    // Lin et al. 2023, Table 1 (recalled from memory): SNR_T = 0.004682.
    expect(doc.terminalSnr).toBeCloseTo(0.004682, 5);
    expect(doc.current.logSnr.every((v) => typeof v === 'number')).toBe(true);
    // The rescaled schedule reaches zero SNR: log-SNR -Infinity travels as null (Lin et al. 2023, Algorithm 1).
    expect(doc.rescaled?.logSnr[999]).toBeNull();
    // The rescale leaves the first step unchanged (Lin et al. 2023, Algorithm 1).
    expect(doc.rescaled?.logSnr[0]).toBeCloseTo(doc.current.logSnr[0]!, 9);
    expect(doc.sampled.map((s) => s.t)).toEqual([901, 801, 701, 601, 501, 401, 301, 201, 101, 1]);
  });

  it('thins long schedules to at most 1000 points, keeping the last step', async () => {
    const long = TRAIN_LEAKY.replace('num_train_timesteps: 1000', 'num_train_timesteps: 4000');
    const { uri } = await openAndWait('plot-long.yaml', long);
    const plot = await client.request<PlotData | null>('noiselint/plotData', { uri });
    const doc = plot!.documents[0]!;
    expect(doc.t.length).toBeLessThanOrEqual(1000);
    expect(doc.t[0]).toBe(0);
    expect(doc.t[doc.t.length - 1]).toBe(3999);
    expect(doc.current.logSnr).toHaveLength(doc.t.length);
  });

  it('serves the summary and the explain text', async () => {
    const { uri } = await openAndWait('summary-train.yaml', TRAIN_LEAKY);
    const summary = await client.request<DocumentSummary>('noiselint/summary', { uri });
    expect(summary).toMatchObject({ uri, isDiffusionConfig: true, state: 'warnings', errors: 0 });
    expect(summary.warnings).toBeGreaterThanOrEqual(1);
    // Lin et al. 2023, Table 1 (recalled from memory).
    expect(summary.terminalSignal).toBeCloseTo(0.068265, 5);
    const none = await openAndWait('summary-none.yaml', NOT_A_CONFIG);
    expect((await client.request<DocumentSummary>('noiselint/summary', { uri: none.uri })).state).toBe('not-a-config');
    const explain = await client.request<{ text: string }>('noiselint/explain', { uri });
    expect(explain.text).toContain('scaled_linear');
    expect(explain.text).toContain('1000');
  });
});

describe('code actions', () => {
  it('offers one quick fix per fix, applies cleanly, and the re-parsed value is right', async () => {
    const { uri, published } = await openAndWait('actions-sample.yaml', SAMPLE_LEADING);
    const skip = published.diagnostics.find((d) => d.code === 'sampler-skips-last-step');
    expect(skip).toBeDefined();
    const actions = await client.request<CodeAction[]>('textDocument/codeAction', {
      textDocument: { uri },
      range: skip!.range,
      context: { diagnostics: [skip], only: ['quickfix'] },
    });
    expect(actions.length).toBeGreaterThanOrEqual(1);
    expect(actions.every((a) => a.kind === 'quickfix' && a.diagnostics?.[0]!.code === 'sampler-skips-last-step')).toBe(true);
    expect(actions.filter((a) => a.isPreferred)).toHaveLength(1);
    const preferred = actions.find((a) => a.isPreferred)!;
    const fixed = applyLspEdits(SAMPLE_LEADING, editsFor(preferred.edit, uri));
    const reread = readFile(fixed, { path: 'actions-sample.yaml' });
    const doc = reread.documents[0]!;
    expect(valueOf(doc.setup, 'timestepSpacing')).toBe('trailing');
    // Lin et al. 2023, Table 2 (recalled from memory): trailing starts at the last step, 999 (0-based).
    expect(doc.analysis.sampling?.firstTimestep).toBe(999);
    expect(fixed).toContain('# Lanternfish Pictures: product stills preview sampler');
  });

  it('titles fixes that change what the model learns as needing fine-tuning', async () => {
    const { uri, published } = await openAndWait('actions-train.yaml', TRAIN_LEAKY);
    const leak = published.diagnostics.find((d) => d.code === 'terminal-snr-leak')!;
    const actions = await client.request<CodeAction[]>('textDocument/codeAction', {
      textDocument: { uri },
      range: leak.range,
      context: { diagnostics: [leak] },
    });
    const quickfixes = actions.filter((a) => a.kind === 'quickfix');
    expect(quickfixes.length).toBeGreaterThanOrEqual(1);
    for (const a of quickfixes) expect(a.title).toMatch(/fine-tun|retrain/i);
    const fixed = applyLspEdits(TRAIN_LEAKY, editsFor(quickfixes[0]!.edit, uri));
    const doc = readFile(fixed, { path: 'actions-train.yaml' }).documents[0]!;
    expect(valueOf(doc.setup, 'zeroTerminalSnr')).toBe(true);
    // Lin et al. 2023, Algorithm 1: the rescaled schedule has SNR_T = 0 exactly.
    expect(doc.analysis.schedule?.terminalSnr).toBe(0);
  });

  it('ignores diagnostics from other sources', async () => {
    const { uri, published } = await openAndWait('actions-foreign.yaml', SAMPLE_LEADING);
    const foreign = { ...published.diagnostics[0], source: 'another-linter' };
    const actions = await client.request<CodeAction[]>('textDocument/codeAction', {
      textDocument: { uri },
      range: foreign.range,
      context: { diagnostics: [foreign], only: ['quickfix'] },
    });
    expect(actions).toEqual([]);
  });

  it('fix-all applies every sampling-only fix and none that needs retraining', async () => {
    const { uri } = await openAndWait('fixall-sample.yaml', SAMPLE_LEADING);
    const actions = await client.request<CodeAction[]>('textDocument/codeAction', {
      textDocument: { uri },
      range: { start: { line: 0, character: 0 }, end: { line: 0, character: 0 } },
      context: { diagnostics: [], only: ['source.fixAll.noiselint'] },
    });
    expect(actions).toHaveLength(1);
    expect(actions[0]!.kind).toBe('source.fixAll.noiselint');
    expect(actions[0]!.title).toBe('noiselint: apply every sampling-only fix (the checkpoint stays valid)');
    const fixed = applyLspEdits(SAMPLE_LEADING, editsFor(actions[0]!.edit, uri));
    const doc = readFile(fixed, { path: 'fixall-sample.yaml' }).documents[0]!;
    expect(valueOf(doc.setup, 'timestepSpacing')).toBe('trailing');
    // The schedule rescale and the target switch need fine-tuning: fix-all leaves them alone.
    expect(valueOf(doc.setup, 'zeroTerminalSnr')).not.toBe(true);
    expect(valueOf(doc.setup, 'predictionTarget')).toBe('epsilon');
    expect(fixed).toContain('# Lanternfish Pictures: product stills preview sampler');
  });
});

describe('documents analysed long ago', () => {
  /** Every view the editor asks for, on one document. */
  async function views(uri: string, diagnostics: Diagnostic[]) {
    const skip = diagnostics.find((d) => d.code === 'sampler-skips-last-step');
    return {
      hover: await client.request<Hover | null>('textDocument/hover', {
        textDocument: { uri },
        position: positionOf(SAMPLE_LEADING, 'beta_schedule', 3),
      }),
      spacing: await client.request<Hover | null>('textDocument/hover', {
        textDocument: { uri },
        position: positionOf(SAMPLE_LEADING, 'leading', 2),
      }),
      hints: await client.request<InlayHint[]>('textDocument/inlayHint', {
        textDocument: { uri },
        range: { start: { line: 0, character: 0 }, end: { line: 100, character: 0 } },
      }),
      lenses: await client.request<CodeLens[]>('textDocument/codeLens', { textDocument: { uri } }),
      plot: await client.request<PlotData | null>('noiselint/plotData', { uri }),
      summary: await client.request<DocumentSummary>('noiselint/summary', { uri }),
      explain: await client.request<{ text: string }>('noiselint/explain', { uri }),
      quickFixes: await client.request<CodeAction[]>('textDocument/codeAction', {
        textDocument: { uri },
        range: skip!.range,
        context: { diagnostics: [skip], only: ['quickfix'] },
      }),
      fixAll: await client.request<CodeAction[]>('textDocument/codeAction', {
        textDocument: { uri },
        range: { start: { line: 0, character: 0 }, end: { line: 0, character: 0 } },
        context: { diagnostics: [], only: ['source.fixAll.noiselint'] },
      }),
    };
  }

  it('answer every view as they did right after the analysis (the server keeps only recent readings in full)', async () => {
    const { uri, published } = await openAndWait('old-sample.yaml', SAMPLE_LEADING);
    const fresh = await views(uri, published.diagnostics);
    // Sanity: the views are not empty, so the comparison below means something.
    expect(fresh.hover).not.toBeNull();
    expect(fresh.hints.length).toBe(2);
    expect(fresh.lenses).toHaveLength(1);
    expect(fresh.plot?.documents[0]!.sampled.map((p) => p.t)).toEqual([901, 801, 701, 601, 501, 401, 301, 201, 101, 1]);
    expect(fresh.quickFixes.length).toBeGreaterThanOrEqual(1);
    expect(fresh.fixAll).toHaveLength(1);
    // Many more documents analysed since: far more than the server keeps in full.
    for (let i = 0; i < 24; i++) await openAndWait(`later-${i}.yaml`, i % 2 ? SAMPLE_LEADING : TRAIN_LEAKY);
    expect(await views(uri, published.diagnostics)).toEqual(fresh);
  });
});

describe('robustness', () => {
  it('answers malformed requests with errors and keeps serving', async () => {
    await expect(client.request('textDocument/hover', { position: { line: 0, character: 0 } })).rejects.toMatchObject({
      code: ErrorCodes.InvalidParams,
    });
    await expect(client.request('noiselint/plotData', { uri: 42 })).rejects.toMatchObject({ code: ErrorCodes.InvalidParams });
    await expect(client.request('noiselint/explain', { uri: 'untitled:/nowhere.yaml' })).rejects.toMatchObject({
      code: ErrorCodes.InvalidParams,
    });
    client.notify('textDocument/didChange', { textDocument: { uri: 'untitled:/never-opened.yaml', version: 3 }, contentChanges: [{ text: 'x' }] });
    client.notify('textDocument/didOpen', { textDocument: null });
    client.notify('workspace/didChangeWatchedFiles', { changes: 'nonsense' });
    expect(
      await client.request('textDocument/hover', { textDocument: { uri: 'untitled:/unknown.yaml' }, position: { line: 0, character: 0 } }),
    ).toBeNull();
    expect(await client.request('noiselint/plotData', { uri: 'untitled:/unknown.yaml' })).toBeNull();
    expect(await client.request('textDocument/codeAction', { textDocument: { uri: 'untitled:/unknown.yaml' }, range: null, context: null })).toEqual(
      [],
    );
    // Still alive and correct afterwards.
    const { published } = await openAndWait('after-errors.yaml', TRAIN_LEAKY);
    expect(codes(published.diagnostics)).toContain('terminal-snr-leak');
    expect(client.isRunning).toBe(true);
  });

  it('survives hostile text: deep nesting and an alias bomb give findings, not a crash', async () => {
    const deep = `noise_scheduler:\n  num_train_timesteps: 1000\n  extra: ${'['.repeat(5000)}${']'.repeat(5000)}\n`;
    const bomb = ['a: &a ["x","x","x","x","x","x","x","x","x","x"]']
      .concat(
        Array.from(
          { length: 8 },
          (_, i) =>
            `${String.fromCharCode(98 + i)}: &${String.fromCharCode(98 + i)} [${Array(10)
              .fill(`*${String.fromCharCode(97 + i)}`)
              .join(',')}]`,
        ),
      )
      .concat(['num_train_timesteps: 1000', 'beta_schedule: scaled_linear'])
      .join('\n');
    await openAndWait('deep.yaml', deep);
    await openAndWait('bomb.yaml', bomb);
    const { published } = await openAndWait('after-hostile.yaml', TRAIN_LEAKY);
    expect(codes(published.diagnostics)).toContain('terminal-snr-leak');
  });
});

describe('noiselint lsp command line', () => {
  it('refuses other transports with one line and exit code 2', () => {
    const bundle = ensureServerBuilt();
    for (const args of [['lsp', '--socket=5007'], ['lsp']]) {
      const run = spawnSync(process.execPath, [bundle, ...args], { cwd: REPO_ROOT, encoding: 'utf8', input: '' });
      expect(run.status).toBe(2);
      expect(run.stdout).toBe('');
      expect(run.stderr.trim().split('\n')).toHaveLength(1);
      expect(run.stderr).toMatch(/^noiselint lsp: .*--stdio/);
    }
  });
});
