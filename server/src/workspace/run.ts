/**
 * The files of one run read for the run rescale, the same way for the CLI and the language
 * server: the training file named (or the training file of the sampling file named) and all its
 * sampling partners, each sampling file read with its training partner; or a file alone.
 */
import { resolve } from 'node:path';
import { readFile, type FileReading } from '../engine/api';
import type { RunSide } from '../fix/runRescale';
import { runFilesOf } from './pairing';
import type { WorkspaceSession } from './session';
import type { ResolvedProject } from './types';

export interface RunFileRead {
  abs: string;
  /** As messages and diffs name it. */
  shown: string;
  text: string;
  project: ResolvedProject;
  side: RunSide;
  reading: FileReading;
}

export interface RunRead {
  files: RunFileRead[];
  /** One line per file that could not be read. */
  problems: string[];
}

/** Reads the runs of `inputs` (absolute paths), each file once, training files first. */
export function readRun(inputs: readonly string[], session: WorkspaceSession, showPath: (abs: string) => string): RunRead {
  const sides = new Map<string, RunSide>();
  for (const input of inputs) {
    const abs = resolve(input);
    const run = runFilesOf(abs, (p) => {
      const found = session.partnersOf(p, session.projectFor(p).project);
      return { pairRole: found.pairRole, paths: found.paths };
    });
    if (!run.training) {
      if (!sides.has(abs)) sides.set(abs, 'alone');
      continue;
    }
    sides.set(run.training, 'training');
    for (const s of run.sampling) if (sides.get(s) !== 'training') sides.set(s, 'sampling');
  }
  const files: RunFileRead[] = [];
  const problems: string[] = [];
  const order = [...sides].sort((a, b) => (a[1] === 'sampling' ? 1 : 0) - (b[1] === 'sampling' ? 1 : 0));
  for (const [abs, side] of order) {
    const { project } = session.projectFor(abs);
    const read = session.readText(abs, project);
    if (!read.ok) {
      problems.push(`${showPath(abs)}: ${read.problem}`);
      continue;
    }
    const pairing = side === 'sampling' ? session.partnersOf(abs, project) : null;
    const reading = readFile(read.text, { path: showPath(abs), project, partners: pairing?.partners, pairRole: pairing?.pairRole });
    files.push({ abs, shown: showPath(abs), text: read.text, project, side, reading });
  }
  return { files, problems };
}
