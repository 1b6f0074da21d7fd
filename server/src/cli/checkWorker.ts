/**
 * Entry of a `check` worker thread (bundled as server/dist/checkWorker.js). It checks the chunks
 * of files it is sent with its own session and answers each with the record of what happened
 * (commands/checkWorkers.ts), in file order.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { nodeFs } from '../workspace/fs';
import { loadProjectOfFile, type ResolvedProject } from '../workspace/project';
import { WorkspaceSession } from '../workspace/session';
import { displayPath } from './output/report';
import { chunkChecker, type Chunk, type WorkerInit } from './commands/checkWorkers';

const init = workerData as WorkerInit;
const projects = new Map<string, ResolvedProject>();
// The main thread loaded every project file before starting the workers (an invalid one stops the
// run there), and the tree does not change during a run.
const projectOf = (path: string): ResolvedProject => {
  let project = projects.get(path);
  if (!project) {
    project = loadProjectOfFile(path, nodeFs);
    projects.set(path, project);
  }
  return project;
};
const session = new WorkspaceSession({ fs: nodeFs, stableTree: true, showPath: (p) => displayPath(init.cwd, p), projects });
const checkChunk = chunkChecker(session, projectOf, init);

parentPort!.on('message', (chunk: Chunk & { id: number }) => {
  parentPort!.postMessage(checkChunk(chunk, chunk.id));
  // A project is only looked up by its own chunk's files.
  for (const file of chunk.files) projects.delete(file);
});
