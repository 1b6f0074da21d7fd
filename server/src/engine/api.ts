/**
 * The analysis core's front door, shared by the CLI and the language server:
 * text -> located tree -> setup -> analysis -> findings. Never throws.
 */
import { parseText, formatFromPath } from '../parse';
import { buildSetup } from '../setup';
import { analyzeSetup } from '../analysis/analysis';
import type { Finding } from '../base/findings';
import { runRules } from './engine';
import type { AnalyzeOptions, DocumentResult, FileReading, FileResult } from './types';

export type { AnalyzeOptions, DocumentResult, FileReading, FileResult } from './types';

/** Parse, resolve and analyse without running rules (explain, hover, plot). */
export function readFile(text: string, options: AnalyzeOptions): FileReading {
  const format = options.format ?? formatFromPath(options.path) ?? 'yaml';
  const parsed = parseText(text, format, { ...options.project?.limits, ...options.limits }, options.parse);
  const documents: DocumentResult[] = parsed.documents.map((doc) => {
    const setup = buildSetup(doc, {
      extraAliases: options.project?.aliases,
      latentSpaceDefault: options.project?.latentSpace,
    });
    return { index: doc.index, setup, analysis: analyzeSetup(setup) };
  });
  return {
    path: options.path,
    parsed,
    documents,
    isDiffusionConfig: documents.some((d) => d.setup.isDiffusionConfig),
  };
}

/**
 * Rules over a file `readFile` already read, so that nothing is parsed twice (the check command
 * reads every file once to learn its role for pairing, then checks it). `options` must read the
 * text the way `file` was read (same path, format, project and limits); partners and the pair
 * role only change the findings.
 */
export function analyzeRead(file: FileReading, options: AnalyzeOptions): FileResult {
  const findings = runRules(file, options);
  return { ...file, findings };
}

/**
 * Findings as plain data, for keeping after the analysis (a report, an open document). The
 * engine's fix objects stay tied to the parse they were rendered from (fix/applicable.ts keeps it
 * for code actions), so holding them holds the file's whole tree; these copies hold only the
 * findings' own numbers, spans and edits.
 */
export function findingsAsData(findings: readonly Finding[]): Finding[] {
  return findings.map((f) => ({
    ...f,
    fixes: f.fixes.map((x) => ({ title: x.title, effect: x.effect, touchesComment: x.touchesComment, preferred: x.preferred, edits: x.edits })),
  }));
}

/** The whole pipeline, rules included. */
export function analyzeText(text: string, options: AnalyzeOptions): FileResult {
  return analyzeRead(readFile(text, options), options);
}
