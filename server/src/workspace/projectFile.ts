/**
 * The project file: `noiselint.project.yaml` (or `.yml`, `.json`), found by walking up from the checked
 * file. Loading validates every field; a bad file is one ProjectFileError naming the field, never
 * a stack trace. The format is documented in docs/project-file.md.
 */
import { dirname, isAbsolute, join, parse as parsePath, resolve } from 'node:path';
import { LineCounter, parseDocument } from 'yaml';
import { SEVERITIES, type Severity } from '../base/findings';
import { FAMILIES, FAMILY_IDS } from '../consumers/profiles';
import { DIALECT_IDS, type DialectId } from '../consumers/dialects';
import type { ConsumerSetting, FamilyId } from '../consumers/types';
import { CONCEPTS, type Concept } from '../fields/concepts';
import { HARD_NESTING_CAP } from '../parse/shared';
import type { ParseLimits } from '../parse/types';
import { ALL_RULE_METAS } from '../rules';
import type { RuleMeta } from '../rules/types';
import { nodeFs, readTextFile, type DirEntry, type WorkspaceFs } from './fs';
import { checkGlob } from './glob';

const shortGlob = (g: string) => (g.length > 60 ? `${g.slice(0, 59)}…` : g);
import type { FilePair, ResolvedProject, RuleSetting } from './types';
import { nearestName } from '../base/nearest';

export const PROJECT_FILE_NAMES = ['noiselint.project.yaml', 'noiselint.project.yml', 'noiselint.project.json'] as const;

/** The built-in settings used when no project file is found. */
export const DEFAULT_PROJECT: Readonly<ResolvedProject> = Object.freeze({
  file: null,
  root: '/',
  include: [],
  exclude: [],
  rules: {},
  aliases: {},
  latentSpace: undefined,
  pairs: [],
  autoPair: true,
  limits: {},
});

/** An invalid project file. `message` is one line: `<file>: <field>: <what is wrong>`. */
export class ProjectFileError extends Error {
  constructor(
    readonly file: string,
    /** Dotted field path, e.g. `rules.terminal-snr-leak.severity`; '' for the whole file. */
    readonly field: string,
    readonly detail: string,
  ) {
    super(`${file}: ${field ? `${field}: ` : ''}${detail}`);
    this.name = 'ProjectFileError';
  }
}

/** Project files are small; anything bigger is a mistake, not a project file. */
const MAX_PROJECT_FILE_BYTES = 256 * 1024;

export const LIMIT_RANGES: Record<keyof ParseLimits, [number, number]> = {
  maxFileBytes: [1, 1024 * 1024 * 1024],
  // The parser cannot honour more (see parse/shared.ts): accept exactly what is enforced.
  maxNesting: [1, HARD_NESTING_CAP],
  maxListLength: [1, 10_000_000],
  maxAliasCount: [0, 1_000_000],
};

export const TOP_LEVEL_FIELDS = ['include', 'exclude', 'rules', 'aliases', 'latentSpace', 'pairs', 'autoPair', 'limits', 'consumers'];

type Catalog = ReadonlyMap<string, RuleMeta>;

/** Rule ids, option names and option types a project file may use. */
const DEFAULT_CATALOG: Catalog = new Map(ALL_RULE_METAS.map((m) => [m.id, m]));

/** Validates the parsed content of a project file and resolves it against its folder. */
/** `catalog`: rule metadata to check `rules` against (default: the registry; null: accept any id). */
export function resolveProjectData(data: unknown, file: string, catalog: Catalog | null = DEFAULT_CATALOG): ResolvedProject {
  const fail = (field: string, detail: string): never => {
    throw new ProjectFileError(file, field, detail);
  };
  const project: ResolvedProject = {
    file,
    root: dirname(file),
    include: [],
    exclude: [],
    rules: {},
    aliases: {},
    latentSpace: undefined,
    pairs: [],
    autoPair: true,
    limits: {},
  };
  if (data === null || data === undefined) return project;
  if (!isPlainObject(data)) return fail('', `must be a mapping of fields (${TOP_LEVEL_FIELDS.join(', ')})`);
  for (const [key, value] of Object.entries(data)) {
    switch (key) {
      case 'include':
      case 'exclude':
        project[key] = globList(value, key, fail);
        break;
      case 'rules':
        project.rules = ruleSettings(value, catalog, fail);
        break;
      case 'aliases':
        project.aliases = aliasTable(value, fail);
        break;
      case 'latentSpace':
      case 'autoPair':
        if (typeof value !== 'boolean') fail(key, `must be true or false, not ${describe(value)}`);
        project[key] = value as boolean;
        break;
      case 'pairs':
        project.pairs = pairList(value, fail);
        break;
      case 'limits':
        project.limits = limitTable(value, fail);
        break;
      case 'consumers':
        project.consumers = consumerList(value, fail);
        break;
      default:
        fail(key, `unknown field${closest(key, TOP_LEVEL_FIELDS)}; fields: ${TOP_LEVEL_FIELDS.join(', ')}`);
    }
  }
  return project;
}

type Fail = (field: string, detail: string) => never;

function globList(value: unknown, field: string, fail: Fail): string[] {
  const list = typeof value === 'string' ? [value] : value;
  if (!Array.isArray(list)) return fail(field, `must be a list of glob patterns, not ${describe(value)}`);
  return list.map((item, i) => {
    const at = `${field}[${i}]`;
    if (typeof item !== 'string' || item.trim() === '') return fail(at, `must be a non-empty glob pattern, not ${describe(item)}`);
    if (isAbsolute(item) || /^[A-Za-z]:[\\/]/.test(item)) return fail(at, `"${item}" must be relative to the project folder`);
    if (item.split(/[\\/]/).includes('..')) return fail(at, `"${item}" must stay inside the project folder (no "..")`);
    try {
      checkGlob(item);
    } catch (err) {
      return fail(at, `"${shortGlob(item)}" is refused (${firstLine(err)})`);
    }
    return item.replace(/^\.\//, '');
  });
}

function ruleSettings(value: unknown, catalog: Catalog | null, fail: Fail): Record<string, RuleSetting> {
  if (!isPlainObject(value)) return fail('rules', `must map rule ids to a severity or { severity, options }, not ${describe(value)}`);
  const out: Record<string, RuleSetting> = {};
  const levels = [...SEVERITIES, 'off'];
  for (const [id, setting] of Object.entries(value)) {
    const at = `rules.${id}`;
    const meta = catalog?.get(id);
    if (catalog && !meta) fail(at, `unknown rule${closest(id, [...catalog.keys()])}`);
    if (typeof setting === 'string') {
      if (!levels.includes(setting)) fail(at, `severity must be one of ${levels.join(', ')}, not "${setting}"`);
      out[id] = { severity: setting as Severity | 'off' };
      continue;
    }
    if (!isPlainObject(setting)) {
      fail(at, `must be a severity (${levels.join(', ')}) or { severity, options }, not ${describe(setting)}`);
    }
    const rule: RuleSetting = {};
    for (const [key, v] of Object.entries(setting)) {
      if (key === 'severity') {
        if (typeof v !== 'string' || !levels.includes(v)) fail(`${at}.severity`, `must be one of ${levels.join(', ')}, not ${describe(v)}`);
        rule.severity = v as Severity | 'off';
      } else if (key === 'options') {
        rule.options = ruleOptions(v, `${at}.options`, meta, fail);
      } else {
        fail(`${at}.${key}`, 'unknown field; fields: severity, options');
      }
    }
    out[id] = rule;
  }
  return out;
}

function ruleOptions(value: unknown, at: string, meta: RuleMeta | undefined, fail: Fail): Record<string, number | string | boolean> {
  if (!isPlainObject(value)) return fail(at, `must be a mapping of option names to values, not ${describe(value)}`);
  const out: Record<string, number | string | boolean> = {};
  for (const [name, v] of Object.entries(value)) {
    const field = `${at}.${name}`;
    if (meta) {
      const known = Object.keys(meta.options);
      const option = meta.options[name];
      if (!option) {
        fail(field, known.length ? `unknown option${closest(name, known)}; options: ${known.join(', ')}` : 'this rule has no options');
      }
      if (typeof v !== typeof option.default) fail(field, `must be a ${typeof option.default}, not ${describe(v)}`);
    }
    if (typeof v === 'number') {
      if (!Number.isFinite(v)) fail(field, `must be a finite number, not ${describe(v)}`);
    } else if (typeof v !== 'string' && typeof v !== 'boolean') {
      fail(field, `must be a number, a string or true/false, not ${describe(v)}`);
    }
    out[name] = v;
  }
  return out;
}

function aliasTable(value: unknown, fail: Fail): Partial<Record<Concept, string[]>> {
  if (!isPlainObject(value)) return fail('aliases', `must map concepts to lists of key spellings, not ${describe(value)}`);
  const out: Partial<Record<Concept, string[]>> = {};
  for (const [concept, spellings] of Object.entries(value)) {
    const at = `aliases.${concept}`;
    if (!(CONCEPTS as readonly string[]).includes(concept)) fail(at, `unknown concept${closest(concept, CONCEPTS)}`);
    const list = typeof spellings === 'string' ? [spellings] : spellings;
    if (!Array.isArray(list)) fail(at, `must be a list of key spellings, not ${describe(spellings)}`);
    out[concept as Concept] = (list as unknown[]).map((s, i) => {
      if (typeof s !== 'string' || s.trim() === '') return fail(`${at}[${i}]`, `must be a non-empty key spelling, not ${describe(s)}`);
      return s;
    });
  }
  return out;
}

function pairList(value: unknown, fail: Fail): FilePair[] {
  if (!Array.isArray(value)) return fail('pairs', `must be a list of { training, sampling }, not ${describe(value)}`);
  return value.map((item, i) => {
    const at = `pairs[${i}]`;
    if (!isPlainObject(item)) return fail(at, `must be { training: <path>, sampling: <path> }, not ${describe(item)}`);
    for (const key of Object.keys(item)) {
      if (key !== 'training' && key !== 'sampling') fail(`${at}.${key}`, 'unknown field; fields: training, sampling');
    }
    const pair = { training: '', sampling: '' };
    for (const key of ['training', 'sampling'] as const) {
      const p = item[key];
      if (typeof p !== 'string' || p.trim() === '') fail(`${at}.${key}`, `must be a path relative to the project folder, not ${describe(p)}`);
      pair[key] = p;
    }
    return pair;
  });
}

const CONSUMER_FIELDS = ['files', 'consumer', 'class', 'dialect'];

function consumerList(value: unknown, fail: Fail): ConsumerSetting[] {
  if (!Array.isArray(value)) return fail('consumers', `must be a list of { files, consumer, class, dialect }, not ${describe(value)}`);
  return value.map((item, i) => {
    const at = `consumers[${i}]`;
    if (!isPlainObject(item)) return fail(at, `must be { files, consumer, class, dialect }, not ${describe(item)}`);
    for (const key of Object.keys(item)) {
      if (!CONSUMER_FIELDS.includes(key))
        fail(`${at}.${key}`, `unknown field${closest(key, CONSUMER_FIELDS)}; fields: ${CONSUMER_FIELDS.join(', ')}`);
    }
    if (item.files === undefined) fail(`${at}.files`, 'is required (a glob or a list of globs)');
    const setting: ConsumerSetting = { files: globList(item.files, `${at}.files`, fail) };
    if (item.consumer !== undefined) {
      const families = FAMILY_IDS as readonly string[];
      if (typeof item.consumer !== 'string' || !families.includes(item.consumer)) {
        fail(
          `${at}.consumer`,
          `must be one of ${families.join(', ')}, not ${describe(item.consumer)}${typeof item.consumer === 'string' ? closest(item.consumer, families) : ''}`,
        );
      }
      setting.consumer = item.consumer as FamilyId;
    }
    if (item.class !== undefined) {
      const family = FAMILIES.find((f) => f.id === setting.consumer);
      if (!family) fail(`${at}.class`, 'needs a consumer family (consumer:) to belong to');
      const names = family.classes.map((c) => c.name);
      if (typeof item.class !== 'string' || !names.includes(item.class)) {
        fail(`${at}.class`, `must be a class of ${setting.consumer} (${names.join(', ')}), not ${describe(item.class)}`);
      }
      setting.class = item.class;
    }
    if (item.dialect !== undefined) {
      const ids = DIALECT_IDS as readonly string[];
      if (typeof item.dialect !== 'string' || !ids.includes(item.dialect)) {
        fail(`${at}.dialect`, `must be one of ${ids.join(', ')}, not ${describe(item.dialect)}`);
      }
      setting.dialect = item.dialect as DialectId;
    }
    if (!setting.consumer && !setting.dialect) fail(at, 'sets neither a consumer nor a dialect');
    return setting;
  });
}

function limitTable(value: unknown, fail: Fail): Partial<ParseLimits> {
  if (!isPlainObject(value)) return fail('limits', `must be a mapping (${Object.keys(LIMIT_RANGES).join(', ')}), not ${describe(value)}`);
  const out: Partial<ParseLimits> = {};
  for (const [key, v] of Object.entries(value)) {
    const at = `limits.${key}`;
    const range = LIMIT_RANGES[key as keyof ParseLimits];
    if (!range) fail(at, `unknown limit${closest(key, Object.keys(LIMIT_RANGES))}; limits: ${Object.keys(LIMIT_RANGES).join(', ')}`);
    if (typeof v !== 'number' || !Number.isInteger(v) || v < range[0] || v > range[1]) {
      fail(at, `must be an integer in [${range[0]}, ${range[1]}], not ${describe(v)}`);
    }
    out[key as keyof ParseLimits] = v;
  }
  return out;
}

/** Parses project file text (YAML or JSON by file name) and validates it. Throws ProjectFileError. */
export function parseProjectFile(text: string, file: string, catalog: Catalog | null = DEFAULT_CATALOG): ResolvedProject {
  let data: unknown;
  if (file.endsWith('.json')) {
    try {
      data = text.trim() === '' ? null : JSON.parse(text.replace(/^\uFEFF/, ''));
    } catch (err) {
      throw new ProjectFileError(file, '', `not valid JSON (${firstLine(err)})`);
    }
  } else {
    const lineCounter = new LineCounter();
    const doc = parseDocument(text, { lineCounter, uniqueKeys: true, prettyErrors: false });
    const problem = doc.errors[0];
    if (problem) {
      const { line } = lineCounter.linePos(problem.pos[0]);
      throw new ProjectFileError(file, '', `not valid YAML at line ${line} (${firstLine(problem.message)})`);
    }
    try {
      data = doc.toJS({ maxAliasCount: 100 });
    } catch (err) {
      throw new ProjectFileError(file, '', `not valid YAML (${firstLine(err)})`);
    }
  }
  return resolveProjectData(data, file, catalog);
}

type CacheEntry = ResolvedProject | ProjectFileError;
const caches = new WeakMap<WorkspaceFs, Map<string, CacheEntry>>();

function cacheFor(fs: WorkspaceFs): Map<string, CacheEntry> {
  let cache = caches.get(fs);
  if (!cache) {
    cache = new Map();
    caches.set(fs, cache);
  }
  return cache;
}

/** Per file-system view: the project file governing each folder looked at, and each project by its file. */
const governing = new WeakMap<WorkspaceFs, Map<string, string | null | ProjectFileError>>();
const byProjectFile = new WeakMap<WorkspaceFs, Map<string, CacheEntry>>();

function mapFor<V>(maps: WeakMap<WorkspaceFs, Map<string, V>>, fs: WorkspaceFs): Map<string, V> {
  let map = maps.get(fs);
  if (!map) {
    map = new Map();
    maps.set(fs, map);
  }
  return map;
}

/** Forget cached projects (all, or those of one file-system view), e.g. after a project file changed. */
export function clearProjectCache(fs?: WorkspaceFs): void {
  for (const maps of [caches, governing, byProjectFile]) maps.delete(fs ?? nodeFs);
}

/**
 * findProjectFile, remembered per folder: a folder's answer is its own project file or its
 * parent's answer, so a walk stops at the first folder already looked at (one walk to the top
 * per tree, not one per folder).
 */
function governingProjectFile(folder: string, fs: WorkspaceFs, listed?: readonly DirEntry[]): string | null | ProjectFileError {
  const known = mapFor(governing, fs);
  const walked: string[] = [];
  let dir = folder;
  const top = parsePath(dir).root;
  let answer: string | null | ProjectFileError | undefined;
  for (;;) {
    answer = known.get(dir);
    if (answer !== undefined) break;
    walked.push(dir);
    // The folder's own listing, when the caller has it, answers what a stat of each name would.
    const found =
      listed && dir === folder
        ? PROJECT_FILE_NAMES.filter((name) => listed.some((e) => e.name === name && e.kind === 'file')).map((name) => join(dir, name))
        : PROJECT_FILE_NAMES.map((name) => join(dir, name)).filter((p) => fs.stat(p)?.kind === 'file');
    if (found.length > 1) {
      const names = found.map((p) => p.slice(dir.length + 1)).join(' and ');
      answer = new ProjectFileError(found[0]!, '', `${names} are both in ${dir}; keep one`);
      break;
    }
    if (found.length === 1) {
      answer = found[0]!;
      break;
    }
    const up = dirname(dir);
    if (dir === top || up === dir) {
      answer = null;
      break;
    }
    dir = up;
  }
  for (const d of walked) known.set(d, answer);
  return answer;
}

/** The project file that governs `folder`: the nearest one walking up, or null. */
export function findProjectFile(folder: string, fs: WorkspaceFs = nodeFs): string | null | ProjectFileError {
  let dir = resolve(folder);
  const top = parsePath(dir).root;
  for (;;) {
    const found = PROJECT_FILE_NAMES.map((name) => join(dir, name)).filter((p) => fs.stat(p)?.kind === 'file');
    if (found.length > 1) {
      const names = found.map((p) => p.slice(dir.length + 1)).join(' and ');
      return new ProjectFileError(found[0]!, '', `${names} are both in ${dir}; keep one`);
    }
    if (found.length === 1) return found[0]!;
    if (dir === top) return null;
    const up = dirname(dir);
    if (up === dir) return null;
    dir = up;
  }
}

/**
 * Settings for a file or folder: the nearest project file walking up (cached per folder), or the
 * defaults rooted at the filesystem root. Throws ProjectFileError when that project file is invalid.
 */
export function loadProject(forPath: string, fs: WorkspaceFs = nodeFs): ResolvedProject {
  const abs = resolve(forPath);
  return projectOfFolder(fs.stat(abs)?.kind === 'dir' ? abs : dirname(abs), fs);
}

/** loadProject for a path known to be a file (a discovered one): no stat of the file itself. */
export function loadProjectOfFile(file: string, fs: WorkspaceFs = nodeFs): ResolvedProject {
  return projectOfFolder(dirname(resolve(file)), fs);
}

/**
 * loadProject for a folder whose entries the caller has just listed (discovery): no stat of the
 * folder itself, and its own project file names are looked up in the listing.
 */
export function loadProjectOfListedFolder(folder: string, entries: readonly DirEntry[], fs: WorkspaceFs = nodeFs): ResolvedProject {
  return projectOfFolder(resolve(folder), fs, entries);
}

function projectOfFolder(folder: string, fs: WorkspaceFs, listed?: readonly DirEntry[]): ResolvedProject {
  const cache = cacheFor(fs);
  let entry = cache.get(folder);
  if (!entry) {
    entry = loadUncached(folder, fs, listed);
    cache.set(folder, entry);
  }
  if (entry instanceof ProjectFileError) throw entry;
  return entry;
}

function loadUncached(folder: string, fs: WorkspaceFs, listed?: readonly DirEntry[]): CacheEntry {
  const found = governingProjectFile(folder, fs, listed);
  if (found instanceof ProjectFileError) return found;
  // Every folder a project file (or the defaults of a file-system root) governs shares one project.
  const key = found ?? `defaults of ${parsePath(folder).root}`;
  const shared = mapFor(byProjectFile, fs);
  let entry = shared.get(key);
  if (!entry) {
    entry = readProject(folder, found, fs);
    shared.set(key, entry);
  }
  return entry;
}

function readProject(folder: string, found: string | null, fs: WorkspaceFs): CacheEntry {
  if (found === null) return { ...DEFAULT_PROJECT, root: parsePath(folder).root, rules: {}, aliases: {}, limits: {} };
  const read = readTextFile(fs, found, MAX_PROJECT_FILE_BYTES);
  if (!read.ok) return new ProjectFileError(found, '', read.problem);
  try {
    return parseProjectFile(read.text, found);
  } catch (err) {
    if (err instanceof ProjectFileError) return err;
    return new ProjectFileError(found, '', firstLine(err));
  }
}

function isPlainObject(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

function describe(v: unknown): string {
  if (v === null || v === undefined) return 'nothing';
  if (Array.isArray(v)) return 'a list';
  if (typeof v === 'object') return 'a mapping';
  if (typeof v === 'string') return `"${v.length > 40 ? `${v.slice(0, 40)}...` : v}"`;
  return String(v);
}

function firstLine(err: unknown): string {
  const message = err instanceof Error ? err.message : String(err);
  return message.split('\n')[0]!.trim();
}

/** ` (did you mean "x"?)` for a near miss (edit distance <= 2), else ''. */
function closest(word: string, candidates: readonly string[]): string {
  const best = nearestName(word, candidates);
  return best ? ` (did you mean "${best}"?)` : '';
}
