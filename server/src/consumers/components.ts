/**
 * Config-object documents read per component (profiles/configObject.ts): each sub-config
 * `{ target, params }` is matched to its class, and each concept is read from the component
 * that consumes it: the schedule from the denoiser's discretization, the target from the scaling
 * class, the step count from the sampler, the guidance scale from the guider, offset noise from
 * the loss. Keys elsewhere (network, first-stage and conditioner sizes) are never read as
 * diffusion concepts.
 */
import { nearestName } from '../base/nearest';
import type { Concept, ConceptValues } from '../fields/concepts';
import { effectiveEntries, type ConceptHit } from '../fields/findConcepts';
import type { KeyAlias } from '../fields/aliases';
import { readValue } from '../fields/values';
import type { LocatedEntry, LocatedMap, LocatedNode } from '../parse/types';
import { COMPONENT_SLOTS, CONFIG_OBJECT_COMPONENTS, CONFIG_OBJECT_ENGINE, SCHEDULE_ROLES } from './profiles/configObject';
import type { ComponentClass, ComponentRole, ConsumerClass } from './types';

export interface ComponentReading {
  role: ComponentRole;
  /** Dotted path of the sub-config (`model.params.sampler_config`). */
  path: string;
  config: LocatedMap;
  target: LocatedEntry | null;
  /** The class path as written. */
  className: string | null;
  cls: ComponentClass | null;
  params: LocatedMap | null;
}

export interface ConfigObjectReading {
  cls: ConsumerClass;
  section: LocatedMap | null;
  evidence: string[];
  components: ComponentReading[];
  role: 'training' | 'sampling' | 'both';
}

const ALL_SCHEDULE: Concept[] = [
  'trainSteps',
  'betaSchedule',
  'betaStart',
  'betaEnd',
  'zeroTerminalSnr',
  'stepsOffset',
  'timestepSpacing',
  'sigmaMin',
  'sigmaMax',
  'rho',
];
const ROLE_CONCEPTS: Partial<Record<ComponentRole, Concept[]>> = {
  scaling: ['predictionTarget'],
  sampler: ['sampleSteps', 'sampler'],
  guider: ['guidanceScale', 'guidanceRescale'],
  loss: ['offsetNoise'],
};

function entryOf(map: LocatedMap, key: string): LocatedEntry | undefined {
  const own = map.entries.find((e) => e.key === key);
  if (own) return own;
  // Only a `<<` merge can bring in a key the map does not have itself.
  if (!map.entries.some((e) => e.key === '<<')) return undefined;
  return effectiveEntries(map).find((e) => e.entry.key === key)?.entry;
}

/** An entry of a component's params as OmegaConf sees it (own keys win over `<<` merges), with the map that holds it. */
function paramEntry(params: LocatedMap, key: string): { entry: LocatedEntry; parent: LocatedMap } | undefined {
  return effectiveEntries(params).find((e) => e.entry.key === key);
}

function mapValue(node: LocatedNode | null | undefined): LocatedMap | null {
  return node && node.kind === 'map' ? node : null;
}

function stringValue(node: LocatedNode | null | undefined): string | null {
  return node && node.kind === 'scalar' && typeof node.value === 'string' ? node.value.trim() : null;
}

export function shortClassName(path: string): string {
  const parts = path.split('.');
  return parts[parts.length - 1] ?? path;
}

function classFor(role: ComponentRole, className: string | null): ComponentClass | null {
  if (!className) return null;
  const short = shortClassName(className);
  return CONFIG_OBJECT_COMPONENTS.find((c) => c.shortName === short && c.roles.includes(role)) ?? null;
}

/** A sub-config: a map with a `target` class path. */
function subConfig(node: LocatedNode | null | undefined): LocatedMap | null {
  const map = mapValue(node);
  return map && stringValue(entryOf(map, 'target')?.value) ? map : null;
}

function locate(base: LocatedMap, basePath: string): ComponentReading[] {
  const out: ComponentReading[] = [];
  for (const slot of COMPONENT_SLOTS) {
    let config: LocatedMap | null = null;
    let path = basePath;
    let holder: LocatedMap | null = base;
    for (let i = 0; i < slot.path.length; i++) {
      const key = slot.path[i]!;
      config = holder ? subConfig(entryOf(holder, key)?.value) : null;
      if (!config) break;
      path = i === 0 ? `${basePath ? `${basePath}.` : ''}${key}` : `${path}.params.${key}`;
      holder = mapValue(entryOf(config, 'params')?.value);
    }
    if (!config) continue;
    const target = entryOf(config, 'target') ?? null;
    const className = stringValue(target?.value);
    out.push({
      role: slot.role,
      path,
      config,
      target,
      className,
      cls: classFor(slot.role, className),
      params: mapValue(entryOf(config, 'params')?.value),
    });
  }
  return out;
}

const ENGINE_SHORT = 'DiffusionEngine';

/**
 * A config-object document: `model.target` names the engine class (or `model.params` holds a
 * denoiser or sampler sub-config), or a sampling file with `sampler_config` at the top level or
 * under `sampling:`. null for anything else.
 */
export function detectConfigObject(root: LocatedMap): ConfigObjectReading | null {
  const model = mapValue(entryOf(root, 'model')?.value);
  const engineTarget = model ? stringValue(entryOf(model, 'target')?.value) : null;
  const engineParams = model ? mapValue(entryOf(model, 'params')?.value) : null;
  const hasParts = (m: LocatedMap | null) =>
    !!m && (!!subConfig(entryOf(m, 'denoiser_config')?.value) || !!subConfig(entryOf(m, 'sampler_config')?.value));
  if (model && engineTarget && (shortClassName(engineTarget) === ENGINE_SHORT || hasParts(engineParams))) {
    const components = engineParams ? locate(engineParams, 'model.params') : [];
    const evidence = [`model.target: ${engineTarget}`];
    if (components.length > 0) evidence.push(describeComponents(components));
    if (shortClassName(engineTarget) !== ENGINE_SHORT)
      evidence.push(`${engineTarget} is read as the engine: its params hold denoiser or sampler sub-configs`);
    evidence.push(...unknownNotes(components));
    const has = (r: ComponentRole) => components.some((c) => c.role === r);
    const role = has('sampler') ? 'both' : has('loss') ? 'training' : 'both';
    return { cls: documentClass({ ...CONFIG_OBJECT_ENGINE, name: engineTarget }, components), section: engineParams, evidence, components, role };
  }
  for (const [base, basePath] of [
    [root, ''],
    [mapValue(entryOf(root, 'sampling')?.value), 'sampling'],
  ] as const) {
    if (!base) continue;
    const sampler = subConfig(entryOf(base, 'sampler_config')?.value);
    if (!sampler) continue;
    const components = locate(base, basePath).filter((c) => c.role.startsWith('sampler') || c.role === 'guider');
    const samplerClass = components.find((c) => c.role === 'sampler');
    const name = samplerClass?.className ?? 'sampler_config';
    const evidence = [`${basePath ? `${basePath}.` : ''}sampler_config.target: ${name}`, describeComponents(components), ...unknownNotes(components)];
    const cls: ConsumerClass = { ...CONFIG_OBJECT_ENGINE, name, source: samplerClass?.cls?.source ?? CONFIG_OBJECT_ENGINE.source, keys: [] };
    return { cls: documentClass(cls, components), section: null, evidence, components, role: 'sampling' };
  }
  return null;
}

/**
 * The class the setup sees for the whole document: the engine (or sampler) named in the file,
 * with the timestep rule of the sampler's discretization and what each component cannot express.
 * It takes no concept key of its own, so a fix never inserts a key (components.ts locates values).
 */
function documentClass(base: ConsumerClass, components: readonly ComponentReading[]): ConsumerClass {
  const cannotExpress: NonNullable<ConsumerClass['cannotExpress']> = {};
  for (const c of components) {
    for (const [concept, text] of Object.entries(c.cls?.cannotExpress ?? {}) as [Concept, string][]) cannotExpress[concept] ??= text;
  }
  cannotExpress.predictionTarget ??=
    "the prediction target is the class named in the model config's denoiser_config.params.scaling_config (EpsScaling, VScaling)";
  const stepper = components.find((c) => c.role === 'sampler-discretization') ?? scheduleComponent(components);
  const out: ConsumerClass = { ...base, conceptKeys: {}, cannotExpress, timesteps: stepper?.cls?.timesteps ?? 'standard' };
  if (stepper?.cls?.fixedSpacing) out.fixedSpacing = stepper.cls.fixedSpacing;
  else delete out.fixedSpacing;
  if (scheduleComponent(components)?.cls?.continuousSigmas) out.continuousSigmas = true;
  return out;
}

function describeComponents(components: ComponentReading[]): string {
  const parts = components.filter((c) => c.role !== 'first-stage').map((c) => `${c.role} ${c.className ? shortClassName(c.className) : '?'}`);
  return `read per component: ${parts.join(', ')}`;
}

function unknownNotes(components: ComponentReading[]): string[] {
  return components
    .filter((c) => !c.cls && c.className && c.role !== 'first-stage' && c.role !== 'engine')
    .map((c) => `${c.path}: ${c.className} has no profile: its keys are not read`);
}

/** The component the schedule is read from (see SCHEDULE_ROLES). */
export function scheduleComponent(components: readonly ComponentReading[]): ComponentReading | null {
  for (const role of SCHEDULE_ROLES) {
    const c = components.find((x) => x.role === role);
    if (c) return c;
  }
  return null;
}

/** Concepts each component provides (the schedule only from the schedule component). */
function conceptsOf(c: ComponentReading, schedule: ComponentReading | null): Concept[] {
  if (c === schedule) return ALL_SCHEDULE;
  return ROLE_CONCEPTS[c.role] ?? [];
}

function keyAlias(key: string): KeyAlias {
  return { spelling: key, kind: 'key', style: 'snake' };
}

function hitAt(
  concept: Concept,
  entry: LocatedEntry,
  parent: LocatedMap,
  path: string,
): Omit<ConceptHit, 'status'> & { status: ConceptHit['status'] } {
  const value = entry.value;
  return {
    concept,
    source: {
      key: entry.key,
      path,
      entry,
      parent,
      keySpan: { ...entry.keySpan },
      valueSpan: entry.aliasSpan ?? (value ? { ...value.span } : { start: entry.span.end, end: entry.span.end }),
    },
    alias: keyAlias(entry.key),
    extra: false,
    keyStyle: 'snake',
    status: 'ok',
  };
}

/** Known class short names per role, for "did you mean" on a misspelt class path. */
function knownNames(role: ComponentRole): string[] {
  return CONFIG_OBJECT_COMPONENTS.filter((c) => c.roles.includes(role)).map((c) => c.shortName);
}

const MISSPELT_CONCEPT: Partial<Record<ComponentRole, Concept>> = {
  scaling: 'predictionTarget',
  sampler: 'sampler',
  discretization: 'betaSchedule',
  'sampler-discretization': 'betaSchedule',
  'sigma-sampler-discretization': 'betaSchedule',
  guider: 'guidanceScale',
};

/**
 * The concept hits of a config-object document, in document order of components: the values
 * written under each component's keys, and what each class implies (the target of a scaling
 * class, the family of a sampler, the schedule family of a discretization), located at the
 * class path. A class path one or two edits from a known class is reported as misspelt.
 */
export function componentHits(components: readonly ComponentReading[]): ConceptHit[] {
  const out: ConceptHit[] = [];
  const schedule = scheduleComponent(components);
  const samplerDiscretization = components.find((c) => c.role === 'sampler-discretization');
  for (const c of components) {
    const wanted = conceptsOf(c, schedule);
    if (wanted.length === 0 || !c.target) continue;
    if (!c.cls) {
      const concept = MISSPELT_CONCEPT[c.role];
      const near = c.className ? nearestName(shortClassName(c.className), knownNames(c.role)) : '';
      if (concept && wanted.includes(concept) && near) {
        const hit = hitAt(concept, c.target, c.config, `${c.path}.target`);
        hit.status = 'problem';
        const implied = CONFIG_OBJECT_COMPONENTS.find((k) => k.shortName === near)?.implies?.[concept as 'predictionTarget'];
        const spelled =
          concept === 'predictionTarget' && (implied === 'epsilon' || implied === 'v') ? implied : concept === 'sampler' ? samplerMember(near) : null;
        hit.problem = {
          kind: 'unknown-value',
          message: `${c.path}.target: "${c.className}" names no ${c.role} class of this code (did you mean ${near}?); instantiating it fails`,
        };
        if (spelled) hit.problem.suggestion = spelled;
        out.push(hit);
      }
      continue;
    }
    const cls = c.cls;
    // Implied by the class itself, located at its class path.
    for (const [concept, value] of Object.entries(cls.implies ?? {}) as [Concept, ConceptValues[Concept]][]) {
      if (!wanted.includes(concept)) continue;
      // A sampling file's schedule family is the sampler's assumption, not a training setting.
      if (c.role === 'sampler-discretization') continue;
      const hit = hitAt(concept, c.target, c.config, `${c.path}.target`);
      hit.value = value;
      if (cls.impliesNote) hit.note = cls.impliesNote;
      out.push(hit);
    }
    if (!c.params) continue;
    for (const [concept, key] of Object.entries(cls.conceptKeys) as [Concept, string][]) {
      if (!wanted.includes(concept)) continue;
      // Steps of a sampler whose discretization is not known give no timesteps worth checking.
      if (concept === 'sampleSteps' && samplerDiscretization && !samplerDiscretization.cls) continue;
      const found = paramEntry(c.params, key);
      if (!found) continue;
      const { entry, parent } = found;
      const read = readValue(concept, entry.value, key, keyAlias(key));
      if (read.status === 'skip') continue;
      const hit = hitAt(concept, entry, parent, `${c.path}.params.${key}`);
      if (read.status === 'unset') hit.status = 'unset';
      else if (read.status === 'ok') {
        for (const v of read.values) {
          const one = { ...hit, concept: v.concept, value: v.value } as ConceptHit;
          if (v.note) one.note = v.note;
          out.push(one);
        }
        continue;
      } else {
        hit.status = 'problem';
        hit.problem = { kind: read.kind, message: read.message };
        if (read.suggestion !== undefined) hit.problem.suggestion = read.suggestion;
      }
      out.push(hit);
    }
  }
  return out;
}

function samplerMember(shortName: string): string | null {
  const value = CONFIG_OBJECT_COMPONENTS.find((k) => k.shortName === shortName)?.implies?.sampler;
  return value ?? null;
}

export interface ComponentDefault {
  concept: Concept;
  value: ConceptValues[Concept];
  note: string;
}

function shortSource(source: string): string {
  const i = source.indexOf(' (');
  return i > 0 ? source.slice(0, i) : source;
}

/** The defaults the components apply when a key is absent, each with the class that applies it. */
export function componentDefaults(components: readonly ComponentReading[]): ComponentDefault[] {
  const out: ComponentDefault[] = [];
  const schedule = scheduleComponent(components);
  const sampler = components.find((c) => c.role === 'sampler');
  for (const c of components) {
    const cls = c.cls;
    if (!cls) continue;
    const wanted = conceptsOf(c, schedule);
    for (const concept of wanted) {
      const implied = cls.implies?.[concept];
      if (implied !== undefined && c.role === 'sampler-discretization') {
        out.push({ concept, value: implied, note: `${cls.impliesNote ?? cls.shortName} (${c.path})` });
        continue;
      }
      const value = cls.defaults[concept];
      if (value === undefined) continue;
      const key = cls.conceptKeys[concept];
      const note = key
        ? `${cls.shortName}'s default for an absent ${key} (${shortSource(cls.source)})`
        : `${cls.shortName} has no setting for ${concept} (${shortSource(cls.source)})`;
      out.push({ concept, value, note });
    }
    if (c === schedule && cls.fixedSpacing) {
      const who = sampler?.cls ? `${sampler.cls.shortName} with ${cls.shortName}` : cls.shortName;
      out.push({
        concept: 'timestepSpacing',
        value: cls.fixedSpacing,
        note: `${who} takes no timestep spacing: its steps are roughly equally spaced from T - 1 down (trailing-like, always starting at T - 1; ${shortSource(cls.source)})`,
      });
    }
  }
  const firstStage = components.find((c) => c.role === 'first-stage');
  if (firstStage?.className) {
    const pixel = shortClassName(firstStage.className) === 'IdentityFirstStage';
    out.push({
      concept: 'latentSpace',
      value: !pixel,
      note: pixel
        ? `first_stage_config is ${firstStage.className}: the engine denoises pixels`
        : `first_stage_config is ${firstStage.className}: the engine denoises its latents`,
    });
  }
  return out;
}

/** The components' own spellings of the members a fix may write at a class path (`target`). */
export function componentSpellings(components: readonly ComponentReading[]): Record<string, Record<string, string>> {
  const target: Record<string, string> = {};
  const prefixOf = (c: ComponentReading | undefined, fallback: string) => {
    const written = c?.className;
    if (!written || !written.includes('.')) return fallback;
    return written.slice(0, written.lastIndexOf('.') + 1);
  };
  const scaling = components.find((c) => c.role === 'scaling');
  const scalingPrefix = prefixOf(scaling, 'sgm.modules.diffusionmodules.denoiser_scaling.');
  target.epsilon = `${scalingPrefix}EpsScaling`;
  target.v = `${scalingPrefix}VScaling`;
  const sampler = components.find((c) => c.role === 'sampler');
  const samplerPrefix = prefixOf(sampler, 'sgm.modules.diffusionmodules.sampling.');
  for (const k of CONFIG_OBJECT_COMPONENTS) {
    const family = k.implies?.sampler;
    if (family && !(family in target)) target[family] = `${samplerPrefix}${k.shortName}`;
  }
  return { target };
}

/** Keys of each component's params (and of the engine's own section) that its class does not take. */
export function componentIgnoredKeys(components: readonly ComponentReading[]): { key: string; path: string; reason: string }[] {
  const out: { key: string; path: string; reason: string }[] = [];
  for (const c of components) {
    if (!c.cls || !c.params) continue;
    const taken = new Set(c.cls.keys);
    for (const { entry: e } of effectiveEntries(c.params)) {
      if (taken.has(e.key) || e.key === '<<') continue;
      out.push({
        key: e.key,
        path: `${c.path}.params.${e.key}`,
        reason: `${c.cls.shortName} does not take ${e.key}: instantiating it raises a TypeError`,
      });
    }
  }
  return out;
}

export interface ComponentProblem {
  concept: Concept;
  kind: 'duplicate';
  source: ConceptHit['source'];
  message: string;
}

const SCHEDULE_KEYS: [Concept, string][] = [
  ['trainSteps', 'num_timesteps'],
  ['betaStart', 'linear_start'],
  ['betaEnd', 'linear_end'],
];

/**
 * Discretizations that disagree with the one the schedule is read from: the sampler (or the
 * loss's sigma sampler) would work on another schedule than the denoiser's. Values compared as
 * each class receives them (written, or the class default when the key is absent).
 */
export function componentProblems(components: readonly ComponentReading[]): ComponentProblem[] {
  const schedule = scheduleComponent(components);
  if (!schedule?.cls || schedule.cls.shortName !== 'LegacyDDPMDiscretization' || !schedule.target) return [];
  const out: ComponentProblem[] = [];
  const effective = (c: ComponentReading, concept: Concept, key: string) => {
    const found = c.params ? paramEntry(c.params, key) : undefined;
    if (found) {
      const read = readValue(concept, found.entry.value, key, keyAlias(key));
      return read.status === 'ok' ? { value: read.values[0]?.value, found, written: true } : null;
    }
    return { value: c.cls?.defaults[concept], found: null, written: false };
  };
  for (const other of components) {
    if (other === schedule || !SCHEDULE_ROLES.includes(other.role) || other.cls !== schedule.cls || !other.target) continue;
    for (const [concept, key] of SCHEDULE_KEYS) {
      const mine = effective(schedule, concept, key);
      const theirs = effective(other, concept, key);
      if (!mine || !theirs || mine.value === undefined || theirs.value === undefined || mine.value === theirs.value) continue;
      const shown = (v: { value: unknown; written: boolean }) => `${String(v.value)}${v.written ? '' : ` (the class default: the key is absent)`}`;
      const source = theirs.found
        ? hitAt(concept, theirs.found.entry, theirs.found.parent, `${other.path}.params.${key}`).source
        : hitAt(concept, other.target, other.config, `${other.path}.target`).source;
      const consequence =
        other.role === 'sampler-discretization'
          ? 'the sampler steps through the sigmas of another schedule than the one the model is trained on'
          : "training draws its noise levels from another schedule than the denoiser's";
      out.push({
        concept,
        kind: 'duplicate',
        source,
        message:
          `${other.path} gives ${key} ${shown(theirs)}, but ${schedule.path} gives ${shown(mine)}: ${consequence}; ` +
          `write the same ${key} in every discretization_config`,
      });
    }
  }
  return out;
}
