/**
 * The language server against a client that breaks the base protocol: it stops reading the
 * server's output, sends a header without Content-Length, or keeps sending requests after
 * `shutdown`. Spoken over raw stdio (no JSON-RPC library on this side) so the bytes are ours.
 */
import { spawn, type ChildProcessWithoutNullStreams } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { afterEach, beforeAll, describe, expect, it } from 'vitest';
import { CLI, ensureCliBuilt } from '../adversarial/helpers';

/** A sampler on a leaking schedule (invented Lanternfish Pictures data): findings, hover and plot data. */
const TEXT = [
  '# Lanternfish Pictures: night storyboard sampler (invented demo data)',
  'num_train_timesteps: 1000',
  'beta_schedule: scaled_linear',
  'beta_start: 0.00085',
  'beta_end: 0.012',
  'prediction_type: epsilon',
  'timestep_spacing: leading',
  'num_inference_steps: 30',
  'guidance_scale: 7.5',
  '',
].join('\n');
const URI = 'file:///lanternfish/night/sampler.yaml';

class RawClient {
  readonly proc: ChildProcessWithoutNullStreams;
  private out = Buffer.alloc(0);
  stderr = '';
  readonly messages: { id?: number; method?: string; result?: unknown; error?: { code: number; message: string } }[] = [];
  exit: Promise<number | null>;

  constructor() {
    this.proc = spawn(process.execPath, ['--max-old-space-size=512', CLI, 'lsp', '--stdio'], { stdio: ['pipe', 'pipe', 'pipe'] });
    this.proc.stderr.setEncoding('utf8');
    this.proc.stderr.on('data', (d: string) => (this.stderr += d));
    this.proc.stdout.on('data', (d: Buffer) => this.onData(d));
    this.exit = new Promise((resolve) => this.proc.on('exit', (code) => resolve(code)));
  }

  private onData(d: Buffer): void {
    this.out = Buffer.concat([this.out, d]);
    for (;;) {
      const end = this.out.indexOf('\r\n\r\n');
      if (end < 0) return;
      const m = /Content-Length: (\d+)/i.exec(this.out.subarray(0, end).toString('ascii'));
      const len = Number(m![1]);
      if (this.out.length < end + 4 + len) return;
      this.messages.push(JSON.parse(this.out.subarray(end + 4, end + 4 + len).toString('utf8')));
      this.out = this.out.subarray(end + 4 + len);
    }
  }

  raw(bytes: string): void {
    this.proc.stdin.write(bytes);
  }

  send(msg: object): void {
    const body = JSON.stringify({ jsonrpc: '2.0', ...msg });
    this.raw(`Content-Length: ${Buffer.byteLength(body)}\r\n\r\n${body}`);
  }

  async response(id: number, timeoutMs = 20_000): Promise<RawClient['messages'][number]> {
    const until = Date.now() + timeoutMs;
    while (Date.now() < until) {
      const m = this.messages.find((x) => x.id === id && x.method === undefined);
      if (m) return m;
      await sleep(20);
    }
    throw new Error(`no response to request ${id} within ${timeoutMs} ms; stderr:\n${this.stderr}`);
  }

  async start(): Promise<void> {
    this.send({
      id: 1,
      method: 'initialize',
      params: { processId: null, rootUri: null, capabilities: { textDocument: { hover: { contentFormat: ['markdown', 'plaintext'] } } } },
    });
    await this.response(1);
    this.send({ method: 'initialized', params: {} });
    this.send({ method: 'textDocument/didOpen', params: { textDocument: { uri: URI, languageId: 'yaml', version: 1, text: TEXT } } });
  }

  rssMb(): number {
    const status = readFileSync(`/proc/${this.proc.pid}/status`, 'utf8');
    return Number(/VmRSS:\s+(\d+)/.exec(status)![1]) / 1024;
  }
}

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

describe('language server and a misbehaving client', () => {
  let client: RawClient | null = null;
  beforeAll(() => ensureCliBuilt());
  afterEach(() => {
    client?.proc.kill('SIGKILL');
    client = null;
  });

  it.skipIf(process.platform !== 'linux')(
    'a client that stops reading: server memory stays flat, and every request is answered once it reads again',
    { timeout: 180_000 },
    async () => {
      const c = (client = new RawClient());
      await c.start();
      await sleep(1500);
      // Stop reading: the pipe fills and the server's output has nowhere to go.
      c.proc.stdout.pause();
      const before = c.rssMb();
      const ids: number[] = [];
      for (let id = 100; id < 4100; id++) {
        ids.push(id);
        // Plot data: curves of the whole schedule, tens of kilobytes per answer.
        c.send({ id, method: 'noiselint/plotData', params: { uri: URI } });
        if (id % 50 === 0) await sleep(20);
      }
      // Long enough for the server to work through what it can read (the old server held ~250 MB).
      let peak = 0;
      for (let t = 0; t < 20; t++) {
        await sleep(1000);
        peak = Math.max(peak, c.rssMb());
      }
      expect(peak - before, `RSS ${before.toFixed(0)} -> peak ${peak.toFixed(0)} MB`).toBeLessThan(80);
      // Reading again: every request is answered, with its result or a ServerCancelled error.
      c.proc.stdout.resume();
      await c.response(ids[ids.length - 1]!, 120_000);
      const answers = new Map(c.messages.filter((m) => m.method === undefined).map((m) => [m.id, m]));
      expect(ids.filter((i) => !answers.has(i))).toEqual([]);
      const errors = ids.map((i) => answers.get(i)!.error).filter((e) => e !== undefined);
      for (const e of errors) expect(e.code).toBe(-32802);
      expect(errors.length).toBeLessThan(ids.length);
    },
  );

  it('a header without Content-Length is logged in one line and the server keeps answering', async () => {
    const c = (client = new RawClient());
    await c.start();
    c.raw('X-Garbage: yes\r\n\r\n{"jsonrpc":"2.0","id":7,"method":"textDocument/hover"}');
    c.send({ id: 8, method: 'textDocument/hover', params: { textDocument: { uri: URI }, position: { line: 1, character: 3 } } });
    const hover = await c.response(8);
    expect(hover.error).toBeUndefined();
    expect(hover.result).not.toBeNull();
    const lines = c.stderr.split('\n').filter((l) => /Content-Length/.test(l));
    expect(lines, c.stderr).toHaveLength(1);
    expect(lines[0]).toMatch(/^noiselint: a message header has no valid Content-Length/);
    // A body that is not JSON and an oversized header block: logged and skipped too.
    c.raw('Content-Length: 5\r\n\r\nnope!');
    c.raw(`${'y'.repeat(20_000)}`);
    c.send({ id: 9, method: 'textDocument/hover', params: { textDocument: { uri: URI }, position: { line: 1, character: 3 } } });
    expect((await c.response(9)).result).not.toBeNull();
    expect(c.stderr).toMatch(/is not JSON; skipped/);
    expect(c.stderr).toMatch(/not an LSP header/);
  });

  it('after shutdown, requests get InvalidRequest (-32600) and exit ends the process with 0', async () => {
    const c = (client = new RawClient());
    await c.start();
    c.send({ id: 20, method: 'shutdown' });
    expect((await c.response(20)).error).toBeUndefined();
    c.send({ id: 21, method: 'textDocument/hover', params: { textDocument: { uri: URI }, position: { line: 1, character: 3 } } });
    c.send({ id: 22, method: 'noiselint/plotData', params: { uri: URI } });
    const [a, b] = [await c.response(21), await c.response(22)];
    expect(a.error?.code).toBe(-32600);
    expect(b.error?.code).toBe(-32600);
    expect(a.result).toBeUndefined();
    c.send({ method: 'exit' });
    expect(await c.exit).toBe(0);
  });
});
