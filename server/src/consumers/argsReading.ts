/**
 * The concepts an argument set's script reads from keys the alias table does not know, or reads
 * differently: flags tested by truth value (`if args.zero_terminal_snr:`, `if not predict_xstart`)
 * and a timestep respacing string, which gives both the number of sampling steps and how they are
 * spread. They become concept hits like the alias table's, with the profile's source named.
 */
import { respacedTimesteps } from '@noiselint/shared-math';
import type { Concept, ConceptValues } from '../fields/concepts';
import type { ConceptHit } from '../fields/findConcepts';
import type { LocatedEntry, LocatedMap, LocatedNode } from '../parse/types';
import type { ConsumerReading } from './decide';
import { consumerMaps } from './forSetup';

type Problem = NonNullable<ConceptHit['problem']>;

function describe(node: LocatedNode): string {
  if (node.kind !== 'scalar') return node.kind === 'map' ? 'a map' : 'a list';
  const raw = node.raw.length > 40 ? `${node.raw.slice(0, 39)}…` : node.raw;
  return raw.replace(/\s+/g, ' ');
}

function hitAt(entry: LocatedEntry, parent: LocatedMap, path: string, concept: Concept): Omit<ConceptHit, 'status'> {
  return {
    concept,
    source: {
      key: entry.key,
      path,
      entry,
      parent,
      keySpan: entry.keySpan,
      valueSpan: entry.aliasSpan ?? entry.value?.span ?? { start: entry.span.end, end: entry.span.end },
    },
    alias: { spelling: entry.key, kind: 'key', style: 'snake' },
    extra: false,
    keyStyle: 'snake',
  };
}

function ok(base: Omit<ConceptHit, 'status'>, value: unknown, note?: string): ConceptHit {
  const hit: ConceptHit = { ...base, status: 'ok', value: value as ConceptValues[Concept] };
  if (note) hit.note = note;
  return hit;
}

function bad(base: Omit<ConceptHit, 'status'>, problem: Problem): ConceptHit {
  return { ...base, status: 'problem', problem };
}

/** Hits for the flags and the respacing string of an argument set; T for the respacing (the file's, else the class default). */
export function argsHits(reading: ConsumerReading | undefined, trainSteps: number | undefined): ConceptHit[] {
  const cls = reading?.cls;
  const args = cls?.args;
  if (!reading || !cls || !args) return [];
  const out: ConceptHit[] = [];
  const root = reading.section;
  for (const map of consumerMaps(reading)) {
    const prefix = root && map !== root ? `${root.entries.find((e) => e.value === map)?.key ?? ''}.` : '';
    for (const entry of map.entries) {
      const path = prefix + entry.key;
      const flag = args.booleanConcepts?.[entry.key];
      const node = entry.value;
      if (flag) {
        if (!node || (node.kind === 'scalar' && node.value === null)) continue;
        const base = hitAt(entry, map, path, flag.concept);
        const v = node.kind === 'scalar' ? node.value : undefined;
        if (typeof v === 'boolean' || v === 0 || v === 1) {
          out.push(ok(base, v === true || v === 1 ? flag.whenTrue : flag.whenFalse));
        } else if (typeof v === 'string') {
          // Read as the script reads it (Python truth value), and reported: the text says otherwise.
          const truthy = v !== '';
          const hit = ok(
            base,
            truthy ? flag.whenTrue : flag.whenFalse,
            `the string ${describe(node)} is ${truthy ? 'true' : 'false'} to ${cls.name}`,
          );
          hit.problem = {
            kind: 'wrong-type',
            message:
              `${entry.key}: ${describe(node)} is a string: ${cls.name} tests this flag by its truth value, so any non-empty ` +
              `string turns it on (here: ${truthy ? 'on' : 'off'}); write true or false without quotes`,
          };
          out.push(hit);
        } else {
          out.push(bad(base, { kind: 'wrong-type', message: `${entry.key}: expected true or false, found ${describe(node)}` }));
        }
        continue;
      }
      if (entry.key === args.respacingKey) out.push(...respacingHits(entry, map, path, cls.name, trainSteps ?? cls.defaults.trainSteps ?? 1000));
    }
  }
  return out;
}

/**
 * The respacing string as space_timesteps reads it: "" keeps all T steps (no sampling setting of
 * its own), "ddimN" an exact stride from 0 (spacing uniform), counts per section (spacing
 * linspace within each section). A number is a TypeError there: it must be a string or a list.
 */
function respacingHits(entry: LocatedEntry, parent: LocatedMap, path: string, className: string, T: number): ConceptHit[] {
  const node = entry.value;
  const steps = hitAt(entry, parent, path, 'sampleSteps');
  const spacing = hitAt(entry, parent, path, 'timestepSpacing');
  if (!node || (node.kind === 'scalar' && node.value === null)) return [];
  let spec: string;
  if (node.kind === 'scalar' && typeof node.value === 'string') {
    spec = node.value;
    if (spec === '') return [];
  } else if (node.kind === 'list' && node.items.every((i) => i.kind === 'scalar' && typeof i.value === 'number' && Number.isSafeInteger(i.value))) {
    spec = node.items.map((i) => String((i as { value: number }).value)).join(',');
  } else if (node.kind === 'scalar' && typeof node.value === 'number') {
    return [
      bad(steps, {
        kind: 'wrong-type',
        message:
          `${entry.key}: ${describe(node)} is a number: ${className} needs the string "${node.raw.trim()}" ` +
          `(space_timesteps takes len() of it and raises TypeError on a number)`,
      }),
    ];
  } else {
    return [bad(steps, { kind: 'wrong-type', message: `${entry.key}: expected a string such as "250" or "ddim50", found ${describe(node)}` })];
  }
  const kept = respacedTimesteps(T, spec);
  if (!kept.ok) {
    return [
      bad(steps, {
        kind: /whole number/.test(kept.problem) ? 'not-a-number' : 'wrong-type',
        message: `${entry.key}: ${kept.problem} (space_timesteps raises ValueError at start-up; T = ${T})`,
      }),
    ];
  }
  const ts = kept.value;
  const ddim = spec.startsWith('ddim');
  const stride = ts.length > 1 ? ts[0]! - ts[1]! : T;
  const note = ddim
    ? `timestep_respacing "${spec}": stride ${stride} from step 0, so the noisiest kept step is ${ts[0]} (space_timesteps)`
    : `timestep_respacing "${spec}": ${spec.includes(',') ? 'sections of T, each' : 'one section of T'} spaced evenly from its first to its last step (space_timesteps)`;
  return [ok(steps, ts.length, note), ok(spacing, ddim ? 'uniform' : 'linspace', note)];
}
