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
  fs?: WorkspaceFs;
  /** Role of a sibling file, for automatic pairing (see roles.ts: diskRoleProbe). */
  roleOf: RoleProbe;
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
  if (isAbsolute(written) || /^[A-Za-z]:[\\/]/.test(written)) {
    return { ok: false, problem: `"${written}" must be relative to the project folder` };
  }
  const abs = resolve(project.root, written);
  if (!isInside(project.root, abs)) return { ok: false, problem: `"${written}" leaves the project folder` };
  const st = fs.stat(abs);
  if (!st) return { ok: false, problem: `"${written}" does not exist` };
  if (st.kind !== 'file') return { ok: false, problem: `"${written}" is not a file` };
  const real = fs.realpath(abs);
  const realRoot = fs.realpath(project.root) ?? project.root;
  if (!real || !isInside(realRoot, real)) {
    return { ok: false, problem: `"${written}" is a link that resolves outside the project folder` };
  }
  return { ok: true, path: abs };
}

interface ResolvedPair {
  training: string;
  sampling: string;
}

/** The usable explicit pairs and one warning line for each unusable pair side. */
export function validatePairs(project: ResolvedProject, fs: WorkspaceFs = nodeFs): { pairs: ResolvedPair[]; warnings: string[] } {
  const pairs: ResolvedPair[] = [];
  const warnings: string[] = [];
  project.pairs.forEach((pair, i) => {
    const training = resolvePairPath(project, pair.training, fs);
    const sampling = resolvePairPath(project, pair.sampling, fs);
    for (const [side, r] of [['training', training], ['sampling', sampling]] as const) {
      if (!r.ok) warnings.push(`${project.file ?? 'project'}: pairs[${i}].${side}: ${r.problem}; pair ignored`);
    }
    if (training.ok && sampling.ok) {
      if (samePath(training.path, sampling.path, fs)) {
        warnings.push(`${project.file ?? 'project'}: pairs[${i}]: training and sampling are the same file; pair ignored`);
      } else {
        pairs.push({ training: training.path, sampling: sampling.path });
      }
    }
  });
  return { pairs, warnings };
}

function samePath(a: string, b: string, fs: WorkspaceFs): boolean {
  if (resolve(a) === resolve(b)) return true;
  const ra = fs.realpath(a);
  return ra !== undefined && ra === fs.realpath(b);
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
  const fs = deps.fs ?? nodeFs;
  const abs = resolve(file);
  const { pairs } = validatePairs(project, fs);
  const explicit = explicitMatch(abs, pairs, fs);
  if (explicit) return explicit;
  if (!project.autoPair) return null;
  try {
    return autoMatch(abs, project, pairs, fs, deps.roleOf);
  } catch {
    return null;
  }
}

function explicitMatch(file: string, pairs: ResolvedPair[], fs: WorkspaceFs): PairMatch | null {
  let match: PairMatch | null = null;
  for (const pair of pairs) {
    for (const role of ['training', 'sampling'] as const) {
      if (!samePath(file, pair[role], fs)) continue;
      const partner = role === 'training' ? pair.sampling : pair.training;
      if (!match) match = { role, partners: [partner], how: 'explicit' };
      else if (match.role === role && !match.partners.includes(partner)) match.partners.push(partner);
    }
  }
  return match;
}

function autoMatch(file: string, project: ResolvedProject, pairs: ResolvedPair[], fs: WorkspaceFs, roleOf: RoleProbe): PairMatch | null {
  const folder = dirname(file);
  const inExplicitPair = (p: string) => pairs.some((pair) => samePath(p, pair.training, fs) || samePath(p, pair.sampling, fs));
  const realRoot = fs.realpath(project.root) ?? project.root;
  const candidates: string[] = [];
  for (const entry of fs.readDir(folder)) {
    if (entry.kind !== 'file' || !isConfigFileName(entry.name) || isProjectFileName(entry.name)) continue;
    const path = join(folder, entry.name);
    if (!projectSelects(project, path) || inExplicitPair(path)) continue;
    if (entry.isSymlink) {
      const real = fs.realpath(path);
      if (!real || !isInside(realRoot, real)) continue;
    }
    candidates.push(path);
  }
  if (candidates.length > MAX_AUTO_CANDIDATES || !candidates.some((c) => samePath(c, file, fs))) return null;
  candidates.sort();
  const self = candidates.find((c) => samePath(c, file, fs))!;
  const roles = new Map(candidates.map((c) => [c, roleOf(c)]));
  const role = roles.get(self);
  if (role !== 'training' && role !== 'sampling') return null;
  const other: PairRole = role === 'training' ? 'sampling' : 'training';
  const sameRole = candidates.filter((c) => roles.get(c) === role);
  const otherRole = candidates.filter((c) => roles.get(c) === other);
  if (sameRole.length === 1 && otherRole.length === 1) return { role, partners: [otherRole[0]], how: 'auto-role' };
  const key = pairNameKey(self.slice(folder.length + 1));
  const keyOf = (p: string) => pairNameKey(p.slice(folder.length + 1));
  const sameKey = sameRole.filter((c) => keyOf(c) === key);
  const otherKey = otherRole.filter((c) => keyOf(c) === key);
  if (sameKey.length === 1 && otherKey.length === 1) return { role, partners: [otherKey[0]], how: 'auto-name' };
  return null;
}
