/**
 * Which code consumes a document, and which loader parses it: from the project file's choice
 * (per glob), else from evidence in the document (a class-name key and its value, a `target:`
 * class path, section shapes, key sets) and the file name. Nothing matched: the generic reading.
 */
import type { LocatedMap, LocatedNode, ParsedDocument, SourceFormat } from '../parse/types';
import { DIALECTS, type DialectId } from './dialects';
import { GENERIC_FAMILY, SCHEDULER_META_KEYS, familyById } from './profiles';
import type { ConsumerClass, ConsumerDecision, ConsumerFamily, FamilyId } from './types';
import { detectConfigObject, type ComponentReading } from './components';

/** What the project file says for a path (already matched against its globs). */
export interface ConsumerChoice {
  family?: FamilyId;
  /** A class name of the family (e.g. `EulerDiscreteScheduler`). */
  className?: string;
  dialect?: DialectId;
  /** The glob that matched, for the evidence line. */
  glob?: string;
}

export interface ConsumerReading {
  decision: ConsumerDecision;
  family: ConsumerFamily;
  cls: ConsumerClass | null;
  /** The map whose keys the consumer reads (null: the whole document, generic reading). */
  section: LocatedMap | null;
  /** Config-object documents: the sub-configs, each read by its own class (components.ts). */
  components?: ComponentReading[];
  /** The document's role when the consumer tells it (an engine trains and samples). */
  role?: 'training' | 'sampling' | 'both';
  /** When the loader merges the first-level tables into one namespace: the section, then each table. */
  flatSections?: LocatedMap[];
  /**
   * The class reads only its section, a map nested in a larger config (a scheduler instantiated
   * from `_target_`); every key outside it is read the generic way.
   */
  outsideGeneric?: boolean;
}

interface Detected {
  family: ConsumerFamily;
  cls: ConsumerClass | null;
  section: LocatedMap | null;
  evidence: string[];
  components?: ComponentReading[];
  role?: 'training' | 'sampling' | 'both';
  /** The loader, when the evidence names it (Hydra's instantiation keys: OmegaConf). */
  dialect?: DialectId;
  outsideGeneric?: boolean;
}

function scalarString(node: LocatedNode | null | undefined): string | null {
  return node && node.kind === 'scalar' && typeof node.value === 'string' ? node.value : null;
}

function entryOf(map: LocatedMap, key: string) {
  return map.entries.find((e) => e.key === key);
}

function baseName(path: string): string {
  const parts = path.split(/[\\/]/);
  return parts[parts.length - 1] ?? path;
}

function detectSchedulerConfig(root: LocatedMap, path: string): Detected | null {
  const family = familyById('scheduler-config');
  const classEntry = entryOf(root, '_class_name');
  const className = scalarString(classEntry?.value);
  const version = scalarString(entryOf(root, '_diffusers_version')?.value);
  const name = baseName(path);
  if (!className || !/Scheduler$/.test(className)) return null;
  const evidence = [`_class_name: "${className}"`];
  if (version) evidence.push(`_diffusers_version: "${version}"`);
  if (/^scheduler_config\.json$/i.test(name) || /[\\/]scheduler[\\/]/.test(path)) evidence.push(`file name ${name}`);
  const cls = family.classes.find((c) => c.name === className) ?? null;
  if (!cls) evidence.push(`${className} has no profile: its keys are read the generic way`);
  return { family, cls, section: root, evidence };
}

function mapAt(node: LocatedNode | null | undefined, key: string): LocatedMap | null {
  if (!node || node.kind !== 'map') return null;
  const v = entryOf(node, key)?.value;
  return v && v.kind === 'map' ? v : null;
}

function detectTargetConfig(root: LocatedMap): Detected | null {
  const model = mapAt(root, 'model');
  const target = scalarString(model ? entryOf(model, 'target')?.value : null);
  if (!model || !target) return null;
  const params = mapAt(model, 'params');
  if (target.startsWith('ldm.models.diffusion.ddpm.')) {
    const family = familyById('latent-diffusion');
    const cls = family.classes.find((c) => c.name === target) ?? null;
    const evidence = [`model.target: ${target}`];
    if (params) evidence.push('model.params holds the class keyword arguments');
    if (!cls) evidence.push(`${target} has no profile: its keys are read the generic way`);
    return { family, cls, section: params, evidence };
  }
  return null;
}

function detect(doc: ParsedDocument, path: string): Detected | null {
  const root = doc.root;
  if (!root || root.kind !== 'map') return null;
  return (
    detectSchedulerConfig(root, path) ??
    detectTargetConfig(root) ??
    detectComponents(root) ??
    detectInstantiatedScheduler(root) ??
    detectArgs(root, path)
  );
}

/** Keys of Hydra's `instantiate`: `_target_` names the class, the others steer instantiate itself. */
const INSTANTIATE_META_KEYS = ['_target_', '_partial_', '_recursive_', '_convert_', '_args_'];

const MAX_INSTANTIATE_DEPTH = 4;

/** Every map down to a small depth whose `_target_` (or `target` beside `params`) names a profiled scheduler class. */
function instantiatedSchedulers(
  node: LocatedNode | null | undefined,
  path: string,
  depth: number,
  classes: ConsumerClass[],
  out: { cls: ConsumerClass; section: LocatedMap; path: string; key: string; target: string }[],
): void {
  if (!node || node.kind !== 'map' || depth > MAX_INSTANTIATE_DEPTH || out.length > 1) return;
  for (const key of ['_target_', 'target']) {
    const target = scalarString(entryOf(node, key)?.value);
    if (!target) continue;
    const short = target.slice(target.lastIndexOf('.') + 1);
    const cls = classes.find((c) => c.name === short);
    if (!cls) continue;
    // `_target_`: the keyword arguments sit beside it; `target`: they sit under `params`.
    const section = key === '_target_' ? node : mapAt(node, 'params');
    if (section) out.push({ cls, section, path, key, target });
    return;
  }
  for (const e of node.entries) {
    if (e.value?.kind === 'map') instantiatedSchedulers(e.value, path ? `${path}.${e.key}` : e.key, depth + 1, classes, out);
  }
}

/**
 * A scheduler class of the open diffusion library instantiated from a map nested in a larger
 * config: Hydra's `_target_: diffusers.EulerDiscreteScheduler` with its keyword arguments beside
 * it (loaded by OmegaConf), or `target:` with `params:`. That class reads that map, with its own
 * defaults; the rest of the document (the pipeline call's steps and guidance) is read the generic
 * way. A document with two such maps keeps the generic reading: which one samples is not known.
 */
function detectInstantiatedScheduler(root: LocatedMap): Detected | null {
  const family = familyById('scheduler-config');
  if (family.id === 'generic') return null;
  const found: { cls: ConsumerClass; section: LocatedMap; path: string; key: string; target: string }[] = [];
  instantiatedSchedulers(root, '', 0, family.classes, found);
  if (found.length !== 1) return null;
  const hit = found[0]!;
  const where = hit.path ? ` at ${hit.path}` : '';
  const hydra = hit.key === '_target_';
  // Both instantiation styles load the file with OmegaConf (Hydra; instantiate_from_config).
  const evidence = [
    `${hit.key}: ${hit.target}${where}: the class is called with ${hydra ? 'the keys beside it' : 'its params'} as keyword arguments`,
    'keys outside that map are read the generic way',
    hydra
      ? "_target_ is Hydra's instantiation key: Hydra loads the file with OmegaConf"
      : 'target with params: loaded with OmegaConf and instantiated from it',
  ];
  return { family, cls: hit.cls, section: hit.section, evidence, outsideGeneric: true, dialect: 'omegaconf' };
}

function detectComponents(root: LocatedMap): Detected | null {
  const family = familyById('config-object');
  if (family.id === 'generic') return null;
  const found = detectConfigObject(root);
  return found ? { family, ...found } : null;
}

/**
 * Flat argument files: a training script's arguments, or an older pixel model's argument set.
 * Within a family, each class is tried with its own signature (the family's otherwise); the class
 * with the most signature keys present wins, the first listed on a tie.
 */
function detectArgs(root: LocatedMap, path: string): Detected | null {
  const rootOnly = [root];
  let flattened: LocatedMap[] | undefined;
  for (const family of [familyById('pixel-args'), familyById('training-args')]) {
    if (family.id === 'generic') continue;
    let best: { cls: ConsumerClass; hits: string[]; maps: LocatedMap[] } | null = null;
    for (const cls of family.classes) {
      const signature = cls.signature ?? family.signature;
      if (!signature) continue;
      const maps = cls.args?.flattensSections ? (flattened ??= flatMaps(root)) : rootOnly;
      const hits = signatureHits(signature, maps);
      if (hits.length < (cls.signatureMin ?? family.signatureMin ?? 2)) continue;
      if (!best || hits.length > best.hits.length) best = { cls, hits, maps };
    }
    if (!best) continue;
    const { cls, hits, maps } = best;
    const evidence = [`keys of ${cls.name}: ${hits.slice(0, 4).join(', ')}${hits.length > 4 ? `, ... (${hits.length})` : ''}`];
    if (maps.length > 1)
      evidence.push(
        `tables ${maps
          .slice(1)
          .map((m) => `[${root.entries.find((e) => e.value === m)?.key}]`)
          .join(', ')} are merged into one namespace`,
      );
    const name = baseName(path);
    if (/\.toml$/i.test(name) && cls.args?.flattensSections) evidence.push(`file name ${name} (a --config_file TOML)`);
    return { family, cls, section: root, evidence };
  }
  return null;
}

const SIGNATURE_SETS = new WeakMap<readonly string[], ReadonlySet<string>>();

/** The keys of `signature` that some map of `maps` has, in the signature's order (nothing is built for a file that has none). */
function signatureHits(signature: readonly string[], maps: readonly LocatedMap[]): string[] {
  let wanted = SIGNATURE_SETS.get(signature);
  if (!wanted) {
    wanted = new Set(signature);
    SIGNATURE_SETS.set(signature, wanted);
  }
  let present: Set<string> | null = null;
  for (const m of maps) for (const e of m.entries) if (wanted.has(e.key)) (present ??= new Set()).add(e.key);
  if (!present) return [];
  const found = present;
  return signature.filter((k) => found.has(k));
}

/** The root and its first-level tables, for a loader that merges them into one namespace. */
export function flatMaps(root: LocatedMap): LocatedMap[] {
  const out = [root];
  for (const e of root.entries) if (e.value && e.value.kind === 'map') out.push(e.value);
  return out;
}

function chooseDialect(
  format: SourceFormat,
  family: ConsumerFamily,
  choice: ConsumerChoice | undefined,
  fromFile?: DialectId,
): { id: DialectId; basis: ConsumerDecision['dialectBasis'] } {
  if (choice?.dialect) return { id: choice.dialect, basis: 'project' };
  if (fromFile && format === 'yaml') return { id: fromFile, basis: 'file' };
  // TOML types its values by its own grammar: one loader whatever the consumer.
  if (format === 'toml')
    return { id: family.dialect.toml ?? 'tomllib', basis: family.id !== 'generic' && family.dialect.toml ? 'family' : 'extension' };
  const json = format === 'json' || format === 'jsonc';
  if (family.id !== 'generic') return { id: json ? family.dialect.json : family.dialect.yaml, basis: 'family' };
  return { id: 'generic', basis: 'extension' };
}

export function decideConsumer(doc: ParsedDocument, format: SourceFormat, path: string, choice?: ConsumerChoice): ConsumerReading {
  let detected: Detected | null = null;
  let basis: ConsumerDecision['basis'] = 'fallback';
  try {
    detected = detect(doc, path);
  } catch {
    detected = null;
  }
  if (choice?.family) {
    const family = familyById(choice.family);
    const root = doc.root && doc.root.kind === 'map' ? doc.root : null;
    const wanted = choice.className ?? (detected?.family.id === family.id ? detected.cls?.name : undefined);
    const cls = wanted ? (family.classes.find((c) => c.name === wanted) ?? null) : detected?.family.id === family.id ? detected.cls : null;
    const evidence = [
      `project file: ${choice.glob ? `"${choice.glob}" ` : ''}sets consumer ${family.id}${choice.className ? ` (${choice.className})` : ''}`,
    ];
    if (detected && detected.family.id === family.id) evidence.push(...detected.evidence);
    const same = detected?.family.id === family.id ? detected : null;
    detected = { family, cls, section: same ? same.section : root, evidence };
    if (same?.components) detected.components = same.components;
    if (same?.role) detected.role = same.role;
    if (same?.outsideGeneric) detected.outsideGeneric = true;
    if (same?.dialect) detected.dialect = same.dialect;
    basis = 'project';
  } else if (detected) {
    basis = 'file';
  }
  const family = detected?.family ?? GENERIC_FAMILY;
  const dialect = chooseDialect(format, family, choice, detected?.dialect);
  const evidence = detected?.evidence ?? ['no class-name key, target class path or known key set: read the generic way'];
  const cls = detected?.cls ?? null;
  const section = detected?.section ?? null;
  const flat = cls?.args?.flattensSections && section ? { flatSections: flatMaps(section) } : {};
  return {
    decision: {
      family: family.id,
      familyTitle: family.title,
      className: cls?.name ?? null,
      classSource: cls?.source ?? null,
      basis,
      evidence,
      dialect: dialect.id,
      dialectTitle: DIALECTS[dialect.id].title,
      dialectBasis: dialect.basis,
    },
    family,
    cls,
    section,
    ...(detected?.components ? { components: detected.components } : {}),
    ...(detected?.role ? { role: detected.role } : {}),
    ...flat,
    ...(detected?.outsideGeneric ? { outsideGeneric: true } : {}),
  };
}

/** Keys of the consumer's section that the consumer itself treats as metadata (never "ignored"). */
export function metaKeysOf(family: ConsumerFamily): string[] {
  return family.id === 'scheduler-config' ? [...SCHEDULER_META_KEYS, ...INSTANTIATE_META_KEYS] : [];
}
