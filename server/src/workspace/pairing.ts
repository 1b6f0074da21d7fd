/**
 * Pairing of a training file with the sampling file(s) that must agree with it.
 *
 * Explicit pairs come from the project file (`pairs: [{ training, sampling }]`, paths relative to
 * the project folder). A pair path must stay inside the project folder: absolute paths, `..`
 * escapes and symlinks that resolve outside are ignored with a one-line warning.
 *
 * Automatic pairing (project `autoPair`, default true) looks only at the file's own folder, at the
 * config files the project selects that are in no explicit pair. A file's role is 'training' when
 * every diffusion document in it is a training setup, 'sampling' when every one is a sampling
 * setup. Then:
 *  1. exactly one training file and exactly one sampling file in the folder: they are a pair;
 *  2. otherwise files pair by name: drop the extension, split the name at `-`, `_`, `.` and
 *     spaces, drop the words train, training, sample, samples, sampling, infer, inference; a
 *     training file and a sampling file with the same remaining words pair when no other file of
 *     either role has those words (`train-night.yaml` + `sample-night.yaml`).
 * A folder with more than MAX_AUTO_CANDIDATES config files is not auto-paired.
 *
 * Two paths name the same file when they are equal once resolved, or else when their canonical
 * (symlink-free) paths are equal; canonical paths are only asked for when links are in play, and a
 * PairingMemo keeps them, with each folder's candidates, for a whole run.
 */
import { dirname, isAbsolute, join, relative, resolve, sep } from 'node:path';
import type { Setup } from '../setup/types';
import { isConfigFileName, isProjectFileName, projectSelects } from './discover';
import { nodeFs, type WorkspaceFs } from './fs';
import type { ResolvedProject } from './types';

export type PairRole = 'training' | 'sampling';
export type FileRole = PairRole | 'mixed' | 'none';
/** Role of a file from its content; the language server passes one that reads open documents. */
export type RoleProbe = (absPath: string) => FileRole;

export interface PairMatch {
  /** Role of the file asked about. */
  role: PairRole;
  /** Absolute paths of the other side (several training... or several sampling files). */
  partners: string[];
  how: 'explicit' | 'auto-role' | 'auto-name';
}

export interface PairingDeps {
  /** Ignored when `memo` is given (the memo reads through its own view). */
  fs?: WorkspaceFs;
  /** Role of a sibling file, for automatic pairing (the session's roleOf). */
  roleOf: RoleProbe;
  /**
   * File-system facts kept between calls. Pass one for a run over files that do not change
   * meanwhile (the check command); without one, each call starts afresh.
   */
  memo?: PairingMemo;
}

export const MAX_AUTO_CANDIDATES = 64;

const TRAINING_WORDS = new Set(['train', 'training']);
const SAMPLING_WORDS = new Set(['sample', 'samples', 'sampling', 'infer', 'inference']);

export type PairPathResult = { ok: true; path: string } | { ok: false; problem: string };

const isInside = (root: string, p: string) => {
  const rel = relative(root, p);
  return rel === '' || (!isAbsolute(rel) && rel !== '..' && !rel.startsWith(`..${sep}`));
};

/** Resolves a pair path against the project folder; it must exist and stay inside. */
export function resolvePairPath(project: ResolvedProject, written: string, fs: WorkspaceFs = nodeFs): PairPathResult {
  return resolvePairPathWith(project, written, new PairingMemo(fs));
}

function resolvePairPathWith(project: ResolvedProject, written: string, memo: PairingMemo): PairPathResult {
  if (isAbsolute(written) || /^[A-Za-z]:[\\/]/.test(written)) {
    return { ok: false, problem: `"${written}" must be relative to the project folder` };
  }
  const abs = resolve(project.root, written);
  if (!isInside(project.root, abs)) return { ok: false, problem: `"${written}" leaves the project folder` };
  const st = memo.fs.stat(abs);
  if (!st) return { ok: false, problem: `"${written}" does not exist` };
  if (st.kind !== 'file') return { ok: false, problem: `"${written}" is not a file` };
  const real = memo.realpath(abs);
  if (!real || !isInside(memo.realRoot(project), real)) {
    return { ok: false, problem: `"${written}" is a link that resolves outside the project folder` };
  }
  return { ok: true, path: abs };
}

interface ResolvedPair {
  training: string;
  sampling: string;
}

interface ValidatedPairs {
  pairs: ResolvedPair[];
  warnings: string[];
}

/** The usable explicit pairs and one warning line for each unusable pair side. */
export function validatePairs(project: ResolvedProject, fs: WorkspaceFs = nodeFs): ValidatedPairs {
  return validatePairsWith(project, new PairingMemo(fs));
}

function validatePairsWith(project: ResolvedProject, memo: PairingMemo): ValidatedPairs {
  const pairs: ResolvedPair[] = [];
  const warnings: string[] = [];
  project.pairs.forEach((pair, i) => {
    const training = resolvePairPathWith(project, pair.training, memo);
    const sampling = resolvePairPathWith(project, pair.sampling, memo);
    for (const [side, r] of [
      ['training', training],
      ['sampling', sampling],
    ] as const) {
      if (!r.ok) warnings.push(`${project.file ?? 'project'}: pairs[${i}].${side}: ${r.problem}; pair ignored`);
    }
    if (training.ok && sampling.ok) {
      if (memo.samePath(training.path, sampling.path)) {
        warnings.push(`${project.file ?? 'project'}: pairs[${i}]: training and sampling are the same file; pair ignored`);
      } else {
        pairs.push({ training: training.path, sampling: sampling.path });
      }
    }
  });
  return { pairs, warnings };
}

/** The config files of one folder that take part in automatic pairing, sorted. */
interface FolderCandidates {
  /** More than MAX_AUTO_CANDIDATES: the folder is not auto-paired (and `paths` is incomplete). */
  tooMany: boolean;
  paths: string[];
  /** pairNameKey of each path's file name. */
  keys: Map<string, string>;
  /** At least one of them is a symbolic link: paths alone do not tell which are the same file. */
  anyLink: boolean;
}

/**
 * What pairing learns from the file system, kept for the life of the memo: canonical paths, the
 * validated explicit pairs of each project and the candidates of each folder. Pairing asks the
 * same questions for every file of a folder, so a run over a tree asks each one once.
 */
export class PairingMemo {
  private readonly realpaths = new Map<string, string | undefined>();
  private readonly realRoots = new Map<ResolvedProject, string>();
  private readonly validated = new Map<ResolvedProject, ValidatedPairs>();
  private readonly folders = new Map<ResolvedProject, Map<string, FolderCandidates | null>>();

  constructor(readonly fs: WorkspaceFs = nodeFs) {}

  realpath(path: string): string | undefined {
    if (this.realpaths.has(path)) return this.realpaths.get(path);
    const real = this.fs.realpath(path);
    this.realpaths.set(path, real);
    return real;
  }

  realRoot(project: ResolvedProject): string {
    let root = this.realRoots.get(project);
    if (root === undefined) {
      root = this.realpath(project.root) ?? project.root;
      this.realRoots.set(project, root);
    }
    return root;
  }

  /** Same file: equal once resolved, or (only then) equal canonical paths. */
  samePath(a: string, b: string): boolean {
    if (resolve(a) === resolve(b)) return true;
    const ra = this.realpath(a);
    return ra !== undefined && ra === this.realpath(b);
  }

  pairs(project: ResolvedProject): ValidatedPairs {
    let v = this.validated.get(project);
    if (!v) {
      v = validatePairsWith(project, this);
      this.validated.set(project, v);
    }
    return v;
  }

  /** Candidates of `folder` (null when it cannot be read). */
  candidates(project: ResolvedProject, folder: string): FolderCandidates | null {
    let byFolder = this.folders.get(project);
    if (!byFolder) {
      byFolder = new Map();
      this.folders.set(project, byFolder);
    }
    if (byFolder.has(folder)) return byFolder.get(folder)!;
    let found: FolderCandidates | null;
    try {
      found = this.listCandidates(project, folder);
    } catch {
      found = null;
    }
    byFolder.set(folder, found);
    return found;
  }

  private listCandidates(project: ResolvedProject, folder: string): FolderCandidates {
    const { pairs } = this.pairs(project);
    const inExplicitPair = (p: string) => pairs.some((pair) => this.samePath(p, pair.training) || this.samePath(p, pair.sampling));
    const paths: string[] = [];
    const keys = new Map<string, string>();
    let anyLink = false;
    for (const entry of this.fs.readDir(folder)) {
      if (entry.kind !== 'file' || !isConfigFileName(entry.name) || isProjectFileName(entry.name)) continue;
      const path = join(folder, entry.name);
      if (!projectSelects(project, path) || inExplicitPair(path)) continue;
      if (entry.isSymlink) {
        const real = this.realpath(path);
        if (!real || !isInside(this.realRoot(project), real)) continue;
        anyLink = true;
      }
      paths.push(path);
      if (paths.length > MAX_AUTO_CANDIDATES) return { tooMany: true, paths: [], keys: new Map(), anyLink };
      keys.set(path, pairNameKey(entry.name));
    }
    paths.sort();
    return { tooMany: false, paths, keys, anyLink };
  }
}

/** File role from its documents' setups (only diffusion documents count). */
export function roleOfSetups(setups: readonly Setup[]): FileRole {
  const roles = new Set(setups.filter((s) => s.isDiffusionConfig).map((s) => s.role));
  if (roles.size === 0) return 'none';
  if (roles.size === 1 && roles.has('training')) return 'training';
  if (roles.size === 1 && roles.has('sampling')) return 'sampling';
  return 'mixed';
}

/** The name words left after dropping role words, joined: `train-night_v2.yaml` -> `night-v2`. */
export function pairNameKey(fileName: string): string {
  const stem = fileName.replace(/\.[^.]*$/, '').toLowerCase();
  return stem
    .split(/[-_.\s]+/)
    .filter((w) => w && !TRAINING_WORDS.has(w) && !SAMPLING_WORDS.has(w))
    .join('-');
}

/** The partner(s) of `file`, or null. Never throws; a broken pair is simply not used. */
export function findPartners(file: string, project: ResolvedProject, deps: PairingDeps): PairMatch | null {
  const memo = deps.memo ?? new PairingMemo(deps.fs ?? nodeFs);
  const abs = resolve(file);
  try {
    const { pairs } = memo.pairs(project);
    const explicit = explicitMatch(abs, pairs, memo);
    if (explicit) return explicit;
    if (!project.autoPair) return null;
    return autoMatch(abs, project, memo, deps.roleOf);
  } catch {
    return null;
  }
}

function explicitMatch(file: string, pairs: ResolvedPair[], memo: PairingMemo): PairMatch | null {
  let match: PairMatch | null = null;
  for (const pair of pairs) {
    for (const role of ['training', 'sampling'] as const) {
      if (!memo.samePath(file, pair[role])) continue;
      const partner = role === 'training' ? pair.sampling : pair.training;
      if (!match) match = { role, partners: [partner], how: 'explicit' };
      else if (match.role === role && !match.partners.includes(partner)) match.partners.push(partner);
    }
  }
  return match;
}

/**
 * The candidate that is `file` (the first in sorted order, as links can make two names one file).
 * Without links in the folder, two different names in it are two files: a text comparison is exact.
 */
function selfAmong(file: string, folder: FolderCandidates, memo: PairingMemo): string | undefined {
  if (!folder.anyLink) {
    const i = folder.paths.indexOf(file);
    if (i >= 0) return folder.paths[i];
  }
  return folder.paths.find((c) => memo.samePath(c, file));
}

function autoMatch(file: string, project: ResolvedProject, memo: PairingMemo, roleOf: RoleProbe): PairMatch | null {
  const folder = dirname(file);
  const found = memo.candidates(project, folder);
  if (!found || found.tooMany) return null;
  const self = selfAmong(file, found, memo);
  if (self === undefined) return null;
  const candidates = found.paths;
  const roles = new Map(candidates.map((c) => [c, roleOf(c)]));
  const role = roles.get(self);
  if (role !== 'training' && role !== 'sampling') return null;
  const other: PairRole = role === 'training' ? 'sampling' : 'training';
  const sameRole = candidates.filter((c) => roles.get(c) === role);
  const otherRole = candidates.filter((c) => roles.get(c) === other);
  if (sameRole.length === 1 && otherRole.length === 1) return { role, partners: [otherRole[0]!], how: 'auto-role' };
  const keyOf = (p: string) => found.keys.get(p);
  const key = keyOf(self);
  const sameKey = sameRole.filter((c) => keyOf(c) === key);
  const otherKey = otherRole.filter((c) => keyOf(c) === key);
  if (sameKey.length === 1 && otherKey.length === 1) return { role, partners: [otherKey[0]!], how: 'auto-name' };
  return null;
}

/** The files of one run: its training file and that file's sampling partners (absolute paths). */
export interface RunFiles {
  training: string | null;
  sampling: string[];
}

/**
 * The run `file` belongs to, from a pairing lookup: a training file with its sampling partners,
 * a sampling file with its training file and that file's other sampling partners, or the file
 * alone (training null, sampling empty).
 */
export function runFilesOf(file: string, pairsOf: (path: string) => { pairRole?: PairRole; paths: string[] }): RunFiles {
  const own = pairsOf(file);
  if (!own.pairRole || own.paths.length === 0) return { training: null, sampling: [] };
  if (own.pairRole === 'training') return { training: file, sampling: [...own.paths] };
  const training = own.paths[0]!;
  const back = pairsOf(training);
  const sampling = back.pairRole === 'training' ? [...back.paths] : [];
  if (!sampling.includes(file)) sampling.unshift(file);
  return { training, sampling };
}
