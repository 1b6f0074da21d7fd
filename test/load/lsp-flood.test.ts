/**
 * The real language server under load: 10,000 didChange notifications interleaved with hover,
 * codeAction and inlayHint requests, cancellations, requests for unknown documents and malformed
 * params. The server stays up, answers every request (result or error, never silence), and ends
 * with the diagnostics of the last version. Then 2,000 documents are opened and closed and the
 * server's resident memory stays bounded (generous bound; no timing assertions).
 */
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { CancellationTokenSource } from 'vscode-jsonrpc/node';
import type { Diagnostic } from 'vscode-languageserver-protocol';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { analyzeText } from '../../server/src/engine/api';
import { EXPLAIN_REQUEST, PLOT_DATA_REQUEST, SUMMARY_REQUEST } from '../../server/src/base/protocol';
import { ensureCliBuilt, removeTempDirs, tempDir } from '../adversarial/helpers';
import { LspTestClient } from './lspClient';
import { configText } from './texts';

const CHANGES = Number(process.env.NOISELINT_LOAD_CHANGES ?? 10_000);
const DOCS = Number(process.env.NOISELINT_LOAD_DOCS ?? 2_000);

const codesOf = (d: Diagnostic[]) => d.map((x) => String(x.code ?? '')).sort();

describe('language server under load', () => {
  afterAll(removeTempDirs);
  let client: LspTestClient;
  let dir: string;

  beforeAll(async () => {
    ensureCliBuilt();
    dir = tempDir('lsp-load');
    writeFileSync(join(dir, 'storyboard.yaml'), configText(0, 0));
    client = await LspTestClient.start({ cwd: dir });
  });

  afterAll(async () => {
    await client?.stop();
  });

  it(`survives ${CHANGES} didChange notifications interleaved with requests, cancels and junk`, async () => {
    const uri = `file://${join(dir, 'storyboard.yaml')}`;
    const ghost = `file://${join(dir, 'never-opened.yaml')}`;
    client.open(uri, configText(0, 0));
    const requests: Promise<unknown>[] = [];
    /** Well-formed, not cancelled: these must succeed. */
    const wellFormed: { method: string; p: Promise<unknown> }[] = [];
    const send = (method: string, params: unknown, cancel = false, good = false) => {
      const source = new CancellationTokenSource();
      const p = client.connection.sendRequest(method, params, source.token);
      if (cancel) source.cancel();
      requests.push(p);
      if (good && !cancel) wellFormed.push({ method, p });
    };
    const fullRange = { start: { line: 0, character: 0 }, end: { line: 49, character: 0 } };
    let version = 1;
    for (let i = 1; i <= CHANGES; i++) {
      // Junk first, so that the last message of the flood is a real change. (A didChange without
      // a version bumps the server's version by one; the next real change then sets it back.)
      if (i % 500 === 0) {
        // Unknown documents and malformed params: an error or null, never a crash.
        send('textDocument/hover', { textDocument: { uri: ghost }, position: { line: 0, character: 0 } }, false, true);
        send('textDocument/codeAction', { textDocument: { uri: ghost }, range: fullRange, context: { diagnostics: [] } }, false, true);
        send('textDocument/inlayHint', { textDocument: { uri }, range: { start: { line: 1e9, character: -5 }, end: { line: -1, character: 0 } } });
        send('textDocument/hover', { textDocument: { uri }, position: { line: 'one', character: null } });
        send('textDocument/hover', { textDocument: 42 });
        send('textDocument/codeAction', null);
        send('textDocument/inlayHint', [1, 2, 3]);
        send(PLOT_DATA_REQUEST, { uri: ghost });
        send(EXPLAIN_REQUEST, { uri: 7 });
        send(SUMMARY_REQUEST, {});
        send('noiselint/noSuchRequest', { uri });
        void client.connection.sendNotification('textDocument/didChange', {
          textDocument: { uri: ghost, version: 3 },
          contentChanges: [{ text: 'x: 1' }],
        });
        void client.connection.sendNotification('textDocument/didChange', { textDocument: { uri }, contentChanges: 'not a list' });
        void client.connection.sendNotification('textDocument/didClose', { textDocument: { uri: ghost } });
      }
      version = i + 1;
      client.change(uri, version, configText(i, i));
      if (i % 25 === 0) {
        const line = i % 14;
        send('textDocument/hover', { textDocument: { uri }, position: { line, character: 4 } }, i % 100 === 0, true);
        send('textDocument/codeAction', { textDocument: { uri }, range: fullRange, context: { diagnostics: [] } }, i % 150 === 0, true);
        send('textDocument/inlayHint', { textDocument: { uri }, range: fullRange }, i % 200 === 0, true);
      }
    }
    // Every request settles (a hang would time the test out); cancelled and malformed ones may
    // end in an error response, well-formed ones (unknown documents included) must succeed.
    await Promise.allSettled(requests);
    const failures: string[] = [];
    for (const { method, p } of wellFormed) await p.catch((err: unknown) => failures.push(`${method}: ${String((err as Error)?.message ?? err)}`));
    expect(failures.slice(0, 5)).toEqual([]);
    expect(wellFormed.length).toBeGreaterThan(CHANGES / 25);
    expect(client.alive).toBe(true);

    // A final request is answered...
    const hover = await client.connection.sendRequest('textDocument/hover', { textDocument: { uri }, position: { line: 3, character: 4 } });
    expect(hover === null || typeof hover === 'object').toBe(true);
    // ...and the diagnostics are those of the last version.
    const last = await client.settled(uri, version);
    const lastText = configText(CHANGES, CHANGES);
    const expected = analyzeText(lastText, { path: join(dir, 'storyboard.yaml') })
      .findings.map((f) => f.rule)
      .sort();
    expect(expected.length).toBeGreaterThan(0);
    expect(codesOf(last.diagnostics)).toEqual(expected);
    if (last.version !== undefined) expect(last.version).toBe(version);
    // Debounced or not, the server did not answer each change with a publish storm beyond the changes.
    expect(client.publishCount.get(uri)!).toBeLessThanOrEqual(CHANGES + 1);
    expect(client.stderr()).not.toMatch(/\n\s+at .+:\d+:\d+\)/);
  });

  it(`memory stays bounded after ${DOCS} documents are opened and closed`, async () => {
    // Warm up (JIT, caches), then measure resident memory before and after.
    for (let i = 0; i < 100; i++) {
      const uri = `file://${join(dir, `warm-${i}.yaml`)}`;
      client.open(uri, configText(i, i));
      client.close(uri);
    }
    const warm = `file://${join(dir, 'warm-probe.yaml')}`;
    client.open(warm, configText(1, 1));
    await client.settled(warm, 1);
    const before = client.rssKb();
    const uris: string[] = [];
    let analysed = 0;
    for (let i = 0; i < DOCS; i++) {
      // Five documents per folder: realistic, and it keeps the pairing probes of each folder small.
      const uri = `file://${join(dir, `run-${Math.floor(i / 5)}`, `doc-${i}.yaml`)}`;
      uris.push(uri);
      client.open(uri, configText(i, i));
      if (i % 50 === 49) {
        // Let the batch be analysed (per-document state exists), then close it.
        const batch = uris.slice(-50);
        await client.settled(batch[batch.length - 1]!, 1);
        for (const u of batch) if ((client.latest.get(u)?.diagnostics.length ?? 0) > 0) analysed++;
        for (const u of batch) client.close(u);
      }
    }
    expect(analysed).toBeGreaterThan(DOCS / 2);
    const probe = `file://${join(dir, 'final-probe.yaml')}`;
    client.open(probe, configText(2, 2));
    await client.settled(probe, 1);
    await client.connection.sendRequest('textDocument/hover', { textDocument: { uri: probe }, position: { line: 2, character: 4 } });
    const after = client.rssKb();
    expect(client.alive).toBe(true);
    // Generous: 2,000 documents of ~2 KB each would be ~4 MB if all were kept; 150 MB allows
    // for V8 heap growth that has not been collected yet, but not for a leak of per-document state
    // with schedules (1000 doubles x several arrays x 2,000 documents is already ~100 MB).
    const growthMb = (after - before) / 1024;
    console.log(
      `server RSS ${(before / 1024).toFixed(0)} MB before, ${(after / 1024).toFixed(0)} MB after ${DOCS} documents opened, analysed and closed`,
    );
    expect(growthMb, `RSS ${before} kB -> ${after} kB`).toBeLessThan(150);
    // Closed documents end with their diagnostics cleared (an editor would otherwise show stale ones).
    const stale = uris.filter((u) => (client.latest.get(u)?.diagnostics.length ?? 0) > 0);
    expect(stale.slice(0, 5)).toEqual([]);
  });
});
