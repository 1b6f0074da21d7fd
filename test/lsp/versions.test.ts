/**
 * Never stale: 1,000 rapid incremental edits end with the diagnostics of the last version, and no
 * publication for an older version ever arrives after one for a newer version.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { PlotData } from '../../server/src/base/protocol';
import { LspClient } from './harness';
import { TRAIN_LEAKY, positionOf } from './fixtures';

let client: LspClient;

beforeAll(async () => {
  client = await LspClient.start();
});

afterAll(async () => {
  await client?.stop();
});

const codesOf = (p: { diagnostics: { code?: unknown }[] }) => p.diagnostics.map((d) => String(d.code)).sort();

describe('rapid edits', () => {
  it('1,000 didChange notifications end with correct diagnostics for the last version, in order', async () => {
    const uri = 'untitled:/lanternfish/typing-fast.yaml';
    client.open(uri, TRAIN_LEAKY);
    await client.waitForDiagnostics(uri, (p) => p.version === 1);

    // Type over beta_end 1,000 times: 0.012 <-> 0.013 (both leak: terminal-snr-leak only).
    const at = positionOf(TRAIN_LEAKY, '0.012');
    const range = { start: at, end: { line: at.line, character: at.character + 5 } };
    let version = 1;
    for (let i = 0; i < 999; i++) client.edit(uri, ++version, range, i % 2 === 0 ? '0.013' : '0.012');
    // The 1,000th edit asks for the zero-SNR rescale: the leak goes, epsilon-at-zero-snr comes.
    const after = positionOf(TRAIN_LEAKY, 'prediction_type: epsilon', 'prediction_type: epsilon'.length);
    client.edit(uri, ++version, { start: after, end: after }, '\n  rescale_betas_zero_snr: true');

    const last = await client.waitForDiagnostics(uri, (p) => p.version === 1001);
    expect(codesOf(last)).toEqual(['epsilon-at-zero-snr']);
    const plot = await client.request<PlotData>('noiselint/plotData', { uri });
    expect(plot.version).toBe(1001);
    // Lin et al. 2023, Algorithm 1: the rescaled schedule ends at SNR 0 exactly.
    expect(plot.documents[0]!.terminalSnr).toBe(0);

    // One more edit, then look at the whole sequence: nothing older arrived after something newer.
    client.edit(uri, 1002, { start: after, end: { line: after.line + 1, character: '  rescale_betas_zero_snr: true'.length } }, '');
    const final = await client.waitForDiagnostics(uri, (p) => p.version === 1002);
    expect(codesOf(final)).toEqual(['terminal-snr-leak']);

    const versions = client.publicationsFor(uri).map((p) => p.version ?? -1);
    for (let i = 1; i < versions.length; i++) expect(versions[i]).toBeGreaterThanOrEqual(versions[i - 1]!);
    // Every intermediate publication matches the text of its own version (all leak).
    for (const p of client.publicationsFor(uri)) {
      if (p.version === 1001) continue;
      expect(codesOf(p)).toEqual(['terminal-snr-leak']);
    }
  });
});
