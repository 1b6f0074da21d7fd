/**
 * `check` over many files in worker threads. The sorted file list is cut into chunks at folder
 * boundaries (automatic pairing looks within one folder, so a file and its partners are read by
 * the same thread), the chunks are handed to the workers and to the run's own thread as each
 * becomes free, and each chunk's record (checkFiles.ts sinks, replayed) is written in chunk order: the report is the one a single
 * thread writes. At most a few chunks wait for an earlier one, so memory stays bounded; every
 * worker has a heap limit, and a worker that fails ends the run with one line.
 */
import { dirname } from 'node:path';
import { Worker } from 'node:worker_threads';
import type { Severity } from '../../base/findings';
import type { EditForm, JsonForm } from '../output/json';
import { displayPath, type CheckedFile, type Summary } from '../output/report';
import type { ResolvedProject } from '../../workspace/project';
import type { WorkspaceSession } from '../../workspace/session';
import { FileChecker, type FileCheckSink } from './checkFiles';

/** Runs with fewer files than this are checked in the run's own thread (starting a worker costs more). */
export const WORKER_MIN_FILES = 400;

/** A thread is worth its start for about this many files. */
const FILES_PER_WORKER = 200;

/** Chunks end at a folder boundary once they hold about this many files. */
export const CHUNK_FILES = 64;

/** The heap limit of one worker, MB (its old generation), with `threads` threads in all. */
export function workerHeapMb(totalMemoryBytes: number, threads: number): number {
  return Math.max(256, Math.min(1024, Math.floor(totalMemoryBytes / 1024 / 1024 / (2 * threads))));
}

/** How many threads (this one and the workers) a run of `files` files gets, given the number asked for. */
export function workersFor(files: number, asked: number): number {
  if (asked <= 1 || files < WORKER_MIN_FILES) return 1;
  return Math.max(1, Math.min(asked, Math.floor(files / FILES_PER_WORKER)));
}

/** What a worker is started with. */
export interface WorkerInit {
  cwd: string;
  stream: boolean;
  fixEdits: EditForm;
  jsonForm: JsonForm;
  show: Severity;
}

export interface Chunk {
  files: string[];
  /** Those of `files` named on the command line. */
  named: string[];
}

/** One thing that happened during a chunk's check (a FileCheckSink call), in order. */
export type CheckEvent =
  | ['notice', 'error' | 'warning', string]
  | ['skipped', string, string]
  | ['unchecked', string, string]
  | ['passedOver']
  | ['config', string]
  | ['entry', string, Summary, Summary]
  | ['checked', CheckedFile, [string, string][]];

export interface ChunkResult {
  id: number;
  events: CheckEvent[];
  /** Pairing and project warnings the worker met first during this chunk. */
  warnings: string[];
}

/** A sink that records what it is told, for the main thread to replay. */
export function recordingSink(events: CheckEvent[]): FileCheckSink {
  return {
    notice: (level, message) => events.push(['notice', level, message]),
    skipped: (path, reason) => events.push(['skipped', path, reason]),
    unchecked: (path, reason) => events.push(['unchecked', path, reason]),
    passedOver: () => events.push(['passedOver']),
    config: (path) => events.push(['config', path]),
    entry: (json, counted, listed) => events.push(['entry', json, counted, listed]),
    checked: (file, texts) => events.push(['checked', file, [...texts]]),
  };
}

export function replay(events: readonly CheckEvent[], sink: FileCheckSink): void {
  for (const e of events) {
    if (e[0] === 'notice') sink.notice(e[1], e[2]);
    else if (e[0] === 'skipped') sink.skipped(e[1], e[2]);
    else if (e[0] === 'unchecked') sink.unchecked(e[1], e[2]);
    else if (e[0] === 'passedOver') sink.passedOver();
    else if (e[0] === 'config') sink.config(e[1]);
    else if (e[0] === 'entry') sink.entry(e[1], e[2], e[3]);
    else sink.checked(e[1], new Map(e[2]));
  }
}

/** Checks chunks with one session (a worker's, or the run's own thread's), recording each. */
export function chunkChecker(
  session: WorkspaceSession,
  projectOf: (path: string) => ResolvedProject,
  init: WorkerInit,
): (chunk: Chunk, id: number) => ChunkResult {
  let named: ReadonlySet<string> = new Set();
  const checker = new FileChecker(session, projectOf, { ...init, isNamed: (p) => named.has(p) });
  let warningsSent = 0;
  return (chunk, id) => {
    named = new Set(chunk.named);
    const events: CheckEvent[] = [];
    const sink = recordingSink(events);
    for (const file of chunk.files) checker.checkFile(file, sink);
    const result: ChunkResult = { id, events, warnings: session.warnings.slice(warningsSent) };
    warningsSent = session.warnings.length;
    return result;
  };
}

/** Sorted files cut into chunks of about CHUNK_FILES, only where the folder changes. */
export function chunksOf(files: readonly string[], named: ReadonlySet<string>, size = CHUNK_FILES): Chunk[] {
  const chunks: Chunk[] = [];
  let current: Chunk = { files: [], named: [] };
  let folder = '';
  for (const file of files) {
    const here = dirname(file);
    if (current.files.length >= size && here !== folder) {
      chunks.push(current);
      current = { files: [], named: [] };
    }
    folder = here;
    current.files.push(file);
    if (named.has(file)) current.named.push(file);
  }
  if (current.files.length) chunks.push(current);
  return chunks;
}

export interface WorkerRun {
  script: string;
  /** Threads in all: this one and `threads - 1` workers. */
  threads: number;
  /** Checks a chunk in this thread. */
  local: (chunk: Chunk, id: number) => ChunkResult;
  heapMb: number;
  init: WorkerInit;
  chunks: readonly Chunk[];
  /** Called once per chunk, in chunk order. */
  onChunk: (result: ChunkResult, chunk: Chunk) => void;
}

function oneLine(err: unknown): string {
  return (err instanceof Error ? err.message : String(err)).split('\n')[0] ?? '';
}

/**
 * Checks every chunk: `run.threads - 1` worker threads and this thread (`run.local`) take the next
 * chunk whenever they are free. Rejects with a one-line Error when a worker fails.
 */
export function checkInWorkers(run: WorkerRun): Promise<void> {
  const { chunks } = run;
  // Chunks handed out ahead of the next one to write: enough to keep every thread busy.
  const window = 2 * run.threads;
  return new Promise<void>((resolvePromise, reject) => {
    const pool: Worker[] = [];
    const idle: Worker[] = [];
    const working = new Map<Worker, number>();
    const done = new Map<number, ChunkResult>();
    let next = 0;
    let written = 0;
    let settled = false;
    let localBusy = false;
    const settle = (err?: Error) => {
      if (settled) return;
      settled = true;
      for (const w of pool) void w.terminate();
      if (err) reject(err);
      else resolvePromise();
    };
    const fail = (err: unknown) => settle(err instanceof Error ? err : new Error(String(err)));
    const accept = (result: ChunkResult): boolean => {
      done.set(result.id, result);
      try {
        for (let r = done.get(written); r; r = done.get(written)) {
          done.delete(written);
          run.onChunk(r, chunks[written]!);
          written++;
        }
      } catch (err) {
        fail(err);
        return false;
      }
      return true;
    };
    const free = () => next < chunks.length && next < written + window;
    const dispatch = () => {
      if (settled) return;
      if (!localBusy && free()) {
        // This thread checks a chunk too, after the pending messages (setImmediate).
        localBusy = true;
        const id = next++;
        setImmediate(() => {
          if (settled) return;
          let result: ChunkResult;
          try {
            result = run.local(chunks[id]!, id);
          } catch (err) {
            fail(err);
            return;
          }
          localBusy = false;
          if (accept(result)) dispatch();
        });
      }
      while (idle.length && free()) {
        const w = idle.pop()!;
        working.set(w, next);
        w.postMessage({ id: next, ...chunks[next] });
        next++;
      }
      if (written === chunks.length) settle();
    };
    const where = (w: Worker) => {
      const id = working.get(w);
      const files = id === undefined ? undefined : chunks[id]?.files;
      if (!files?.length) return '';
      const shown = (p: string) => displayPath(run.init.cwd, p);
      return ` while checking ${files.length} files from ${shown(files[0]!)} to ${shown(files[files.length - 1]!)}`;
    };
    for (let i = 1; i < run.threads; i++) {
      const w = new Worker(run.script, { workerData: run.init, resourceLimits: { maxOldGenerationSizeMb: run.heapMb } });
      pool.push(w);
      idle.push(w);
      w.on('message', (result: ChunkResult) => {
        if (settled) return;
        working.delete(w);
        if (!accept(result)) return;
        idle.push(w);
        dispatch();
      });
      w.on('error', (err: Error & { code?: string }) => {
        const reason = err.code === 'ERR_WORKER_OUT_OF_MEMORY' ? `ran out of memory (its heap limit is ${run.heapMb} MB)` : `failed: ${oneLine(err)}`;
        settle(new Error(`a worker thread ${reason}${where(w)}; --workers 1 checks in one thread`));
      });
      w.on('exit', (code) => {
        settle(new Error(`a worker thread stopped (exit code ${code})${where(w)}; --workers 1 checks in one thread`));
      });
    }
    dispatch();
  });
}
