/** How `check` plans a run in worker threads: the option, who gets workers, and where chunks are cut. */
import { describe, expect, it } from 'vitest';
import { parseCheckArgs } from '../../server/src/cli/commands/check';
import {
  CHUNK_FILES,
  chunksOf,
  recordingSink,
  replay,
  workerHeapMb,
  workersFor,
  WORKER_MIN_FILES,
  type CheckEvent,
} from '../../server/src/cli/commands/checkWorkers';
import { runCli } from './check-helpers';

describe('--workers', () => {
  it('takes a whole number of threads and refuses anything else in one line', async () => {
    expect(parseCheckArgs(['--workers', '3']).workers).toBe(3);
    expect(parseCheckArgs([]).workers).toBeUndefined();
    for (const bad of ['0', '-1', 'two', '1.5', '']) {
      const r = await runCli(['check', `--workers=${bad}`], process.cwd());
      expect(r.code, bad).toBe(2);
      expect(r.stderr.trim().split('\n'), bad).toHaveLength(1);
      expect(r.stderr, bad).toMatch(/--workers takes a whole number of threads/);
    }
  });

  it('is on the help page with its default', async () => {
    const r = await runCli(['check', '--help'], process.cwd());
    expect(r.stdout).toMatch(
      /^ +--workers <N> +Threads for runs of \d+ files or more, this one included \(default: the available cores; 1: this thread only\)\.$/m,
    );
  });
});

describe('the plan of a run', () => {
  it('starts workers only for large runs, at most one per 200 files', () => {
    expect(workersFor(WORKER_MIN_FILES - 1, 8)).toBe(1);
    expect(workersFor(100_000, 1)).toBe(1);
    expect(workersFor(WORKER_MIN_FILES, 8)).toBe(2);
    expect(workersFor(10_000, 2)).toBe(2);
    expect(workersFor(10_000, 64)).toBe(50);
  });

  it('bounds each worker heap between 256 MB and 1 GB', () => {
    expect(workerHeapMb(64 * 1024 ** 3, 2)).toBe(1024);
    expect(workerHeapMb(2 * 1024 ** 3, 2)).toBe(512);
    expect(workerHeapMb(512 * 1024 ** 2, 8)).toBe(256);
  });

  it('cuts chunks only where the folder changes, keeping the order', () => {
    const files: string[] = [];
    for (const [folder, n] of [
      ['/p/a', 50],
      ['/p/a/deep', 30],
      ['/p/b', 3],
      ['/p/c', 100],
      ['/p/d', 1],
    ] as const)
      for (let i = 0; i < n; i++) files.push(`${folder}/f${String(i).padStart(3, '0')}.yaml`);
    const chunks = chunksOf(files, new Set(['/p/b/f001.yaml']), CHUNK_FILES);
    expect(chunks.flatMap((c) => c.files)).toEqual(files);
    expect(chunks.map((c) => c.files.length)).toEqual([80, 103, 1]);
    for (const [i, c] of chunks.entries()) {
      if (i > 0)
        expect(c.files[0]!.slice(0, c.files[0]!.lastIndexOf('/'))).not.toBe(
          chunks[i - 1]!.files.at(-1)!.slice(0, chunks[i - 1]!.files.at(-1)!.lastIndexOf('/')),
        );
    }
    expect(chunks[1]!.named).toEqual(['/p/b/f001.yaml']);
    expect(chunks[0]!.named).toEqual([]);
  });

  it('replays a recorded chunk call for call', () => {
    const events: CheckEvent[] = [];
    const rec = recordingSink(events);
    rec.unchecked('/p/x.yaml', 'skipped: looks binary');
    rec.skipped('/p/x.yaml', 'skipped: looks binary');
    rec.passedOver();
    rec.config('/p/y.yaml');
    rec.entry('{"path":"y.yaml","findings":[]}', { errors: 1, warnings: 0, infos: 0, hints: 0 }, { errors: 1, warnings: 0, infos: 0, hints: 0 });
    rec.notice('warning', 'w');
    rec.checked({ path: '/p/y.yaml', text: 't', findings: [], isDiffusionConfig: true }, new Map([['/p/z.yaml', 'z']]));
    const again: CheckEvent[] = [];
    replay(structuredClone(events), recordingSink(again));
    expect(again).toEqual(events);
    expect(again.map((e) => e[0])).toEqual(['unchecked', 'skipped', 'passedOver', 'config', 'entry', 'notice', 'checked']);
  });
});
