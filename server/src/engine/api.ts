/**
 * The analysis core's front door, shared by the CLI and the language server:
 * text -> located tree -> setup -> analysis -> findings. Never throws.
 */
import { DIALECTS, problemsForLoader, readDocument } from '../consumers';
import { parseText, formatFromPath } from '../parse';
import { buildSetup, inheritanceFrom, inheritSetup, type ScheduleInheritance } from '../setup';
import { consumerChoiceFor } from '../consumers/choice';
import { analyzeSetup } from '../analysis/analysis';
import type { Finding } from '../base/findings';
import { runRules } from './engine';
import type { AnalyzeOptions, DocumentResult, FileReading, FileResult } from './types';
import { withProps } from '../base/objects';

export type { AnalyzeOptions, DocumentResult, FileReading, FileResult } from './types';

/** The inheritance `options` ask for: given, or derived from the partners. */
export function inheritanceOf(options: AnalyzeOptions): ScheduleInheritance | null {
  return options.inherit !== undefined ? options.inherit : inheritanceFrom(options.partners, options.pairRole);
}

/** Parse, resolve and analyse without running rules (explain, hover, plot). */
export function readFile(text: string, options: AnalyzeOptions): FileReading {
  const format = options.format ?? formatFromPath(options.path) ?? 'yaml';
  const choice = consumerChoiceFor(options.project, options.path);
  // A loader chosen in the project file types the scalars while parsing; otherwise the consumer
  // stage decides it from the tree and re-types them (consumers/readAs.ts).
  const parseOptions =
    choice?.dialect && !options.parse?.interpret ? withProps(options.parse ?? {}, { interpret: DIALECTS[choice.dialect].interpret }) : options.parse;
  const limits = options.limits ? withProps(options.project?.limits ?? {}, options.limits) : options.project?.limits;
  const parsed = parseText(text, format, limits, parseOptions);
  const inheritance = inheritanceOf(options);
  const readings = parsed.documents.map((doc) => readDocument(doc, parsed, options.path, choice));
  parsed.problems = problemsForLoader(parsed.problems, readings);
  const documents: DocumentResult[] = parsed.documents.map((doc, i) => {
    let setup = buildSetup(doc, {
      extraAliases: options.project?.aliases,
      latentSpaceDefault: options.project?.latentSpace,
      consumer: readings[i]!.reading,
      loaderReadings: readings[i]!.loaderReadings,
    });
    if (inheritance) setup = inheritSetup(setup, inheritance);
    return { index: doc.index, setup, analysis: analyzeSetup(setup) };
  });
  return {
    path: options.path,
    parsed,
    documents,
    isDiffusionConfig: documents.some((d) => d.setup.isDiffusionConfig),
    inheritance,
  };
}

function sameInheritance(a: ScheduleInheritance | null, b: ScheduleInheritance | null): boolean {
  if (a === b) return true;
  if (!a || !b || a.from !== b.from || a.family !== b.family || a.values.length !== b.values.length) return false;
  return a.values.every((v, i) => {
    const w = b.values[i]!;
    if (v.concept !== w.concept || v.key !== w.key || v.assumedThere !== w.assumedThere) return false;
    if (Array.isArray(v.value) && Array.isArray(w.value))
      return v.value.length === w.value.length && v.value.every((x, k) => x === (w.value as number[])[k]);
    return v.value === w.value;
  });
}

/**
 * `file` read with the inheritance `options` ask for. A reading without partners (the check
 * command's role probe) gets the partner's values applied to its setups; a reading with other
 * values is resolved again from its parsed documents. Nothing is parsed twice.
 */
function withInheritance(file: FileReading, options: AnalyzeOptions): FileReading {
  const wanted = inheritanceOf(options);
  const had = file.inheritance ?? null;
  if (sameInheritance(wanted, had)) return file;
  const documents = file.documents.map((d, i) => {
    let setup = d.setup;
    if (had) {
      const doc = file.parsed.documents[i];
      if (!doc) return d;
      setup = buildSetup(doc, { extraAliases: options.project?.aliases, latentSpaceDefault: options.project?.latentSpace });
    }
    if (wanted) setup = inheritSetup(setup, wanted);
    return setup === d.setup ? d : { index: d.index, setup, analysis: analyzeSetup(setup) };
  });
  return withProps(file, { documents, inheritance: wanted });
}

/**
 * Rules over a file `readFile` already read, so that nothing is parsed twice (the check command
 * reads every file once to learn its role for pairing, then checks it). `options` must read the
 * text the way `file` was read (same path, format, project and limits); partners and the pair
 * role change the findings and, on the sampling side, the inherited values.
 */
export function analyzeRead(file: FileReading, options: AnalyzeOptions): FileResult {
  const read = withInheritance(file, options);
  const findings = runRules(read, options);
  return withProps(read, { findings });
}

/**
 * Findings as plain data, for keeping after the analysis (a report, an open document). The
 * engine's fix objects stay tied to the parse they were rendered from (fix/applicable.ts keeps it
 * for code actions), so holding them holds the file's whole tree; these copies hold only the
 * findings' own numbers, spans and edits.
 */
export function findingsAsData(findings: readonly Finding[]): Finding[] {
  return findings.map((f) =>
    withProps(f, {
      fixes: f.fixes.map((x) => ({ title: x.title, effect: x.effect, touchesComment: x.touchesComment, preferred: x.preferred, edits: x.edits })),
    }),
  );
}

/** The whole pipeline, rules included. */
export function analyzeText(text: string, options: AnalyzeOptions): FileResult {
  const once = withProps(options, { inherit: inheritanceOf(options) });
  return analyzeRead(readFile(text, once), once);
}
