/**
 * Hostile documents sent to the real language server (they never touch the disk): a 20 MB text,
 * an alias bomb, 5,000-deep nesting, NUL characters, a 1 MB line, incremental edits with ranges
 * outside the document. The server answers each with diagnostics (a problem, not silence), stays
 * up, and keeps serving an ordinary document afterwards.
 */
import { join } from 'node:path';
import type { Diagnostic } from 'vscode-languageserver-protocol';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ensureCliBuilt, removeTempDirs, tempDir } from '../adversarial/helpers';
import { LspTestClient } from './lspClient';
import { configText } from './texts';

const MB = 1024 * 1024;

function aliasBomb(): string {
  const lines = ['a0: &a0 [lol, lol, lol, lol, lol, lol, lol, lol, lol]'];
  for (let i = 1; i <= 9; i++)
    lines.push(
      `a${i}: &a${i} [${Array(9)
        .fill(`*a${i - 1}`)
        .join(', ')}]`,
    );
  return `${lines.join('\n')}\nnum_train_timesteps: 1000\nbeta_schedule: *a9\n`;
}

describe('language server with hostile documents', () => {
  afterAll(removeTempDirs);
  let client: LspTestClient;
  let dir: string;

  beforeAll(async () => {
    ensureCliBuilt();
    dir = tempDir('lsp-hostile');
    client = await LspTestClient.start({ cwd: dir, settings: { debounceMs: 0 } });
  });

  afterAll(async () => {
    await client?.stop();
  });

  it('answers every hostile document with diagnostics and stays up', async () => {
    const docs: [string, string, string][] = [
      ['huge.yaml', `notes: "${'x'.repeat(20 * MB)}"\nnum_train_timesteps: 1000\n`, 'yaml'],
      ['bomb.yaml', aliasBomb(), 'yaml'],
      // Documents that are not diffusion configs get no diagnostics by design, so these carry
      // concept keys next to the hostile part.
      ['deep.json', `{"num_train_timesteps": 1000, "beta_schedule": "linear", "x": ${'['.repeat(5000)}1${']'.repeat(5000)}}`, 'json'],
      ['deep.yaml', `num_train_timesteps: 1000\nbeta_schedule: linear\nx: ${'['.repeat(5000)}1${']'.repeat(5000)}\n`, 'yaml'],
      ['nul.yaml', 'num_train_timesteps: 1000\u0000\nbeta_schedule: "lin\u0000ear"\n\u0000\u0000', 'yaml'],
      [
        'longline.yaml',
        `description: ${'y'.repeat(MB)}\nbeta_schedule: linear\nnum_train_timesteps: 1000\nprediction_type: epsilon\nrescale_betas_zero_snr: true\n`,
        'yaml',
      ],
      ['astral.yaml', 'num_train_timesteps: [\n\u{1f3ee}]\nbeta_schedule: "\u{1f3ee}"\n', 'yaml'],
    ];
    const results = new Map<string, Diagnostic[]>();
    for (const [name, text, languageId] of docs) {
      const uri = `file://${join(dir, name)}`;
      client.open(uri, text, languageId);
      results.set(name, await client.diagnosticsFor(uri, 1));
      // Hover anywhere (also past the end) answers.
      await client.connection.sendRequest('textDocument/hover', { textDocument: { uri }, position: { line: 1, character: 3 } });
      await client.connection.sendRequest('textDocument/hover', { textDocument: { uri }, position: { line: 99999, character: 99999 } });
    }
    expect(client.alive).toBe(true);
    // Each hostile document reports something (a parse problem or a finding), with ranges that
    // are valid positions.
    for (const [name, diags] of results) {
      expect(diags.length, name).toBeGreaterThan(0);
      for (const d of diags) {
        expect(d.range.start.line, name).toBeGreaterThanOrEqual(0);
        expect(d.range.start.character, name).toBeGreaterThanOrEqual(0);
      }
    }
    expect(
      results
        .get('huge.yaml')!
        .map((d) => d.message)
        .join('\n'),
    ).toMatch(/larger than|maxFileBytes|too large/i);
    expect(
      results
        .get('deep.json')!
        .map((d) => String(d.code))
        .join(' '),
    ).toMatch(/too-deep|parse/);
    expect(
      results
        .get('bomb.yaml')!
        .map((d) => d.message)
        .join('\n'),
    ).toMatch(/alias/i);
    expect(results.get('longline.yaml')!.map((d) => String(d.code))).toContain('epsilon-at-zero-snr');
  });

  it('incremental edits with ranges outside the document are clamped, not fatal', async () => {
    const uri = `file://${join(dir, 'edited.yaml')}`;
    client.open(uri, configText(0, 0), 'yaml');
    await client.diagnosticsFor(uri, 1);
    const junk = [
      { range: { start: { line: 5000, character: 0 }, end: { line: 6000, character: 5 } }, text: 'zzz: 1\n' },
      { range: { start: { line: 3, character: 999 }, end: { line: 1, character: 0 } }, text: '' },
      { range: { start: { line: -4, character: -1 }, end: { line: 0, character: 0 } }, text: '# x\n' },
    ];
    let version = 1;
    for (const change of junk) {
      version++;
      void client.connection.sendNotification('textDocument/didChange', { textDocument: { uri, version }, contentChanges: [change] });
    }
    // Then a full, known text: the diagnostics must be exactly those of that text.
    version++;
    client.change(uri, version, configText(3, 3));
    const final = await client.diagnosticsFor(uri, version);
    expect(client.alive).toBe(true);
    const fresh = `file://${join(dir, 'fresh.yaml')}`;
    client.open(fresh, configText(3, 3), 'yaml');
    const expected = await client.diagnosticsFor(fresh, 1);
    expect(final.map((d) => `${String(d.code)}@${d.range.start.line}`).sort()).toEqual(
      expected.map((d) => `${String(d.code)}@${d.range.start.line}`).sort(),
    );
  });
});
