/**
 * Entry of a `check` worker thread (bundled as server/dist/checkWorker.js). It checks the chunks
 * of files it is sent with its own session and answers each with the record of what happened
 * (commands/checkWorkers.ts), in file order.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { nodeFs } from '../workspace/fs';
import { loadProject, type ResolvedProject } from '../workspace/project';
import { WorkspaceSession } from '../workspace/session';
import { displayPath } from './output/report';
import { FileChecker } from './commands/checkFiles';
import { recordingSink, type CheckEvent, type Chunk, type ChunkResult, type WorkerInit } from './commands/checkWorkers';

const init = workerData as WorkerInit;
const projects = new Map<string, ResolvedProject>();
// The main thread loaded every project file before starting the workers (an invalid one stops the
// run there), and the tree does not change during a run.
const projectOf = (path: string): ResolvedProject => {
  let project = projects.get(path);
  if (!project) {
    project = loadProject(path, nodeFs);
    projects.set(path, project);
  }
  return project;
};
const session = new WorkspaceSession({ fs: nodeFs, stableTree: true, showPath: (p) => displayPath(init.cwd, p), projects });
let named: ReadonlySet<string> = new Set();
const checker = new FileChecker(session, projectOf, {
  cwd: init.cwd,
  stream: init.stream,
  fixEdits: init.fixEdits,
  show: init.show,
  isNamed: (p) => named.has(p),
});
let warningsSent = 0;

parentPort!.on('message', (chunk: Chunk & { id: number }) => {
  named = new Set(chunk.named);
  const events: CheckEvent[] = [];
  const sink = recordingSink(events);
  for (const file of chunk.files) checker.checkFile(file, sink);
  const result: ChunkResult = { id: chunk.id, events, warnings: session.warnings.slice(warningsSent) };
  warningsSent = session.warnings.length;
  parentPort!.postMessage(result);
  // Each project's map is only needed for its own chunk's files.
  for (const file of chunk.files) projects.delete(file);
});
