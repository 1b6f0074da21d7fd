/**
 * The stdio transport of the language server: LSP base-protocol framing over two byte streams,
 * hardened against a client that misbehaves.
 *
 * - Reading: a header block without a usable Content-Length, an oversized header, or a body that
 *   is not JSON is logged in one line (stderr, which clients show in their output channel) and
 *   skipped; the reader resynchronises at the next `Content-Length:` header. Never silent, never
 *   deaf.
 * - After a `shutdown` request, every further request is answered with InvalidRequest, as the
 *   LSP specification asks, without reaching the server; notifications other than `exit` are
 *   dropped.
 * - Writing: when the client stops reading, output that the pipe has not taken is bounded. Past
 *   the bound, input is paused (no new requests are taken until the pipe drains), diagnostics
 *   publications are kept only as the newest per document, log and progress notifications are
 *   dropped, and answers to requests already read are held up to a byte budget, beyond which
 *   each is replaced by a short ServerCancelled error. Memory stays flat however long the
 *   client stalls.
 */
import type { Readable, Writable } from 'node:stream';
import {
  AbstractMessageReader,
  AbstractMessageWriter,
  Disposable,
  ErrorCodes,
  type DataCallback,
  type Message,
  type MessageReader,
  type MessageWriter,
} from 'vscode-languageserver/node';

/** Output not yet taken by the pipe beyond which the writer holds back. */
export const OUTPUT_HIGH_WATER_BYTES = 4 * 1024 * 1024;
/**
 * Answers held while the client does not read, at most. Requests read before the input paused
 * are still answered; past this, an answer is replaced by a short ServerCancelled error.
 */
export const MAX_HELD_BYTES = 8 * 1024 * 1024;
/** LSP 3.17 ServerCancelled: the server cancelled the request (the client may ask again). */
const SERVER_CANCELLED = -32802;
/** A header block longer than this is not a header: resynchronise. */
const MAX_HEADER_BYTES = 8 * 1024;
/** Larger bodies are skipped (a 1 GiB document would otherwise be buffered whole). */
export const MAX_BODY_BYTES = 256 * 1024 * 1024;

const HEADER_END = Buffer.from('\r\n\r\n', 'ascii');
const CONTENT_LENGTH = /^content-length$/i;
const DROPPABLE_NOTIFICATIONS = new Set(['window/logMessage', '$/logTrace', '$/progress', 'telemetry/event']);

type Json = { id?: number | string | null; method?: string; params?: unknown };

export interface TransportOptions {
  /** One line for the client's output channel (default: stderr). */
  log?: (line: string) => void;
  highWaterBytes?: number;
}

export interface Transport {
  reader: MessageReader;
  writer: MessageWriter;
  /** A shutdown request has been read (exit code 0 when the input then ends). */
  shutDownSeen(): boolean;
}

export function createStdioTransport(input: Readable, output: Writable, options: TransportOptions = {}): Transport {
  const log = options.log ?? ((line: string) => void process.stderr.write(`noiselint: ${line}\n`));
  const writer = new BoundedWriter(output, options.highWaterBytes ?? OUTPUT_HIGH_WATER_BYTES);
  const reader = new ResyncingReader(input, log, writer);
  writer.onCongestion = (congested) => (congested ? input.pause() : input.resume());
  return { reader, writer, shutDownSeen: () => reader.shutDown };
}

class ResyncingReader extends AbstractMessageReader implements MessageReader {
  private chunks: Buffer[] = [];
  private buffered = 0;
  /** Body length of the message being read, or -1 while reading headers. */
  private bodyLength = -1;
  private headerLength = 0;
  /** Bytes of an oversized body still to be thrown away as they arrive. */
  private skipping = 0;
  /** After bad input: bytes are dropped until a `Content-Length:` header starts. */
  private hunting = false;
  private callback: DataCallback | null = null;
  shutDown = false;

  constructor(
    private readonly input: Readable,
    private readonly log: (line: string) => void,
    private readonly writer: BoundedWriter,
  ) {
    super();
  }

  listen(callback: DataCallback): Disposable {
    this.callback = callback;
    const onData = (data: Buffer) => this.onData(data);
    const onError = (err: Error) => this.fireError(err);
    const onClose = () => this.fireClose();
    this.input.on('data', onData);
    this.input.on('error', onError);
    this.input.on('end', onClose);
    this.input.on('close', onClose);
    return Disposable.create(() => {
      this.callback = null;
      this.input.off('data', onData);
      this.input.off('error', onError);
      this.input.off('end', onClose);
      this.input.off('close', onClose);
    });
  }

  private onData(data: Buffer): void {
    if (this.skipping > 0) {
      const take = Math.min(this.skipping, data.length);
      this.skipping -= take;
      data = data.subarray(take);
      if (data.length === 0) return;
    }
    this.chunks.push(data);
    this.buffered += data.length;
    for (;;) {
      if (this.bodyLength < 0 && !this.readHeaders()) return;
      if (this.buffered < this.headerLength + this.bodyLength) return;
      const all = this.take(this.headerLength + this.bodyLength);
      const body = all.subarray(this.headerLength);
      this.bodyLength = -1;
      this.deliver(body);
    }
  }

  /** Parses one header block; false when more bytes are needed. */
  private readHeaders(): boolean {
    for (;;) {
      if (this.buffered === 0) return false;
      if (this.hunting) {
        const rest = this.peek(this.buffered);
        const at = rest.toString('latin1').search(/content-length:/i);
        if (at < 0) {
          // Keep a tail: the header may be split across chunks.
          this.take(Math.max(0, rest.length - 15));
          return false;
        }
        this.take(at);
        this.hunting = false;
      }
      const head = this.peek(Math.min(this.buffered, MAX_HEADER_BYTES + HEADER_END.length));
      const end = head.indexOf(HEADER_END);
      if (end < 0) {
        if (head.length <= MAX_HEADER_BYTES) return false;
        this.log(`dropped ${head.length} bytes of input that are not an LSP header; looking for the next Content-Length header`);
        this.resync(1);
        continue;
      }
      let length = -1;
      for (const line of head.subarray(0, end).toString('ascii').split('\r\n')) {
        const colon = line.indexOf(':');
        if (colon > 0 && CONTENT_LENGTH.test(line.slice(0, colon).trim())) {
          const value = line.slice(colon + 1).trim();
          if (/^\d{1,15}$/.test(value)) length = Number(value);
        }
      }
      const headerLength = end + HEADER_END.length;
      if (length < 0) {
        this.log(
          `a message header has no valid Content-Length (${JSON.stringify(shorten(head.subarray(0, end).toString('latin1'), 80))}); skipped up to the next Content-Length header`,
        );
        this.resync(headerLength);
        continue;
      }
      if (length > MAX_BODY_BYTES) {
        this.log(`a message of ${length} bytes is above the ${MAX_BODY_BYTES}-byte limit; skipped`);
        this.take(headerLength);
        const now = Math.min(length, this.buffered);
        this.take(now);
        this.skipping = length - now;
        if (this.skipping > 0) return false;
        continue;
      }
      this.headerLength = headerLength;
      this.bodyLength = length;
      return true;
    }
  }

  /** Drops `from` bytes and looks for the next `Content-Length:` header. */
  private resync(from: number): void {
    this.take(Math.min(from, this.buffered));
    this.hunting = true;
  }

  private deliver(body: Buffer): void {
    let msg: Json;
    try {
      msg = JSON.parse(body.toString('utf8')) as Json;
    } catch {
      this.log(`a message body of ${body.length} bytes is not JSON; skipped`);
      return;
    }
    if (typeof msg !== 'object' || msg === null || Array.isArray(msg)) {
      this.log('a message body is not a JSON object; skipped');
      return;
    }
    if (this.shutDown && typeof msg.method === 'string' && msg.method !== 'exit') {
      // LSP: after shutdown, requests fail with InvalidRequest; notifications other than exit are dropped.
      if (msg.id !== undefined && msg.id !== null) {
        void this.writer.write({
          jsonrpc: '2.0',
          id: msg.id,
          error: { code: ErrorCodes.InvalidRequest, message: `the server is shut down; ${shorten(msg.method, 80)} is not handled` },
        } as Message);
      }
      return;
    }
    if (msg.method === 'shutdown' && msg.id !== undefined) this.shutDown = true;
    this.callback?.(msg as Message);
  }

  private peek(n: number): Buffer {
    if (this.chunks[0]!.length >= n) return this.chunks[0]!.subarray(0, n);
    const joined = Buffer.concat(this.chunks, this.buffered);
    this.chunks = [joined];
    return joined.subarray(0, n);
  }

  private take(n: number): Buffer {
    const out = this.peek(n);
    const first = this.chunks[0]!;
    if (first.length === n) this.chunks.shift();
    else this.chunks[0] = first.subarray(n);
    this.buffered -= n;
    return out;
  }
}

class BoundedWriter extends AbstractMessageWriter implements MessageWriter {
  private congested = false;
  /** Held while congested, in order (serialised): responses, the server's own requests, other notifications. */
  private held: Buffer[] = [];
  private heldBytes = 0;
  /** Newest diagnostics publication per document while congested. */
  private diagnostics = new Map<string, Message>();
  private dropped = 0;
  private corked = false;
  onCongestion: (congested: boolean) => void = () => {};

  constructor(
    private readonly output: Writable,
    private readonly highWater: number,
  ) {
    super();
    output.on('error', (err) => this.fireError(err));
    output.on('close', () => this.fireClose());
  }

  async write(msg: Message): Promise<void> {
    if (!this.congested) {
      this.send(msg);
      if (this.output.writableLength > this.highWater) this.congest();
      return;
    }
    const m = msg as Json;
    if (m.method === 'textDocument/publishDiagnostics' && m.id === undefined) {
      const uri = (m.params as { uri?: unknown } | undefined)?.uri;
      if (typeof uri === 'string') {
        this.diagnostics.delete(uri);
        this.diagnostics.set(uri, msg);
        return;
      }
    }
    if (m.id === undefined && typeof m.method === 'string' && DROPPABLE_NOTIFICATIONS.has(m.method)) {
      this.dropped++;
      return;
    }
    let body = serialise(msg);
    if (this.heldBytes + body.length > MAX_HELD_BYTES && m.method === undefined && m.id !== undefined) {
      body = serialise({
        jsonrpc: '2.0',
        id: m.id,
        error: { code: SERVER_CANCELLED, message: 'the client stopped reading; this answer was dropped, ask again' },
      } as Message);
    }
    this.held.push(body);
    this.heldBytes += body.length;
  }

  end(): void {
    // The output stream belongs to the process.
  }

  private send(msg: Message | Buffer): void {
    // One write per message, and the messages of one turn (a document's diagnostics and its plot
    // notification) leave in one system call: the output is corked until the next tick.
    if (!this.corked) {
      this.corked = true;
      this.output.cork();
      process.nextTick(() => {
        this.corked = false;
        this.output.uncork();
      });
    }
    if (Buffer.isBuffer(msg)) {
      this.output.write(Buffer.concat([Buffer.from(`Content-Length: ${msg.length}\r\n\r\n`, 'ascii'), msg]));
      return;
    }
    const json = JSON.stringify(msg);
    this.output.write(`Content-Length: ${Buffer.byteLength(json, 'utf8')}\r\n\r\n${json}`, 'utf8');
  }

  private congest(): void {
    if (this.congested) return;
    this.congested = true;
    this.onCongestion(true);
    this.output.once('drain', () => this.drain());
  }

  private drain(): void {
    this.congested = false;
    const held = this.held;
    const diagnostics = [...this.diagnostics.values()];
    this.held = [];
    this.heldBytes = 0;
    this.diagnostics.clear();
    for (const msg of held) this.send(msg);
    for (const msg of diagnostics) this.send(msg);
    if (this.dropped > 0) {
      this.send({
        jsonrpc: '2.0',
        method: 'window/logMessage',
        params: { type: 3, message: `noiselint: the client did not read; ${this.dropped} log messages were dropped` },
      } as Message);
      this.dropped = 0;
    }
    if (this.output.writableLength > this.highWater) {
      this.congested = true;
      this.output.once('drain', () => this.drain());
    } else {
      this.onCongestion(false);
    }
  }
}

function serialise(msg: Message): Buffer {
  return Buffer.from(JSON.stringify(msg), 'utf8');
}

function shorten(s: string, max: number): string {
  return s.length <= max ? s : `${s.slice(0, max - 1)}…`;
}
