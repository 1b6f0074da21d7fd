import type { Analysis } from '../analysis/analysis';
import type { Severity, FixEffect } from '../base/findings';
import type { Concept, ConceptValues } from '../fields/concepts';
import type { FieldSource, Setup } from '../setup/types';

/** A change stated in concepts; fix/ renders it as minimal text edits. */
export type ConceptEdit =
  | {
      kind: 'set';
      concept: Concept;
      value: ConceptValues[Concept];
      /** Write the value in its plain spelling instead of copying the old one (`1e-4` -> `0.0001`). */
      plainSpelling?: boolean;
    }
  | {
      kind: 'remove';
      concept: Concept;
      /** Keep a comment that shares the removed key's line, on a line of its own (the run operation). */
      keepComment?: boolean;
    };

export interface ConceptFix {
  /**
   * What the edit does. `{newText}` is replaced by the value the fix writes, in double quotes, when
   * it renders to a single text edit (else by "the suggested value"), so a title can quote the
   * exact spelling.
   */
  title: string;
  effect: FixEffect;
  preferred?: boolean;
  edits: ConceptEdit[];
}

/** What a rule reports; the engine turns it into a located Finding with rendered fixes. */
export interface RuleFinding {
  message: string;
  /** Concept whose field causes the finding; when absent from the file the engine falls back. */
  at?: Concept;
  /** Or an explicit field (e.g. a value problem's source). */
  source?: FieldSource;
  /** Overrides the rule's default severity for this finding (e.g. warning vs info tiers). */
  severity?: Severity;
  related?: { concept?: Concept; source?: FieldSource; path?: string; message: string }[];
  fixes?: ConceptFix[];
}

export interface PartnerDocument {
  path: string;
  setup: Setup;
  analysis: Analysis;
}

export type OptionValue = number | string | boolean;

/** A rule option: its default decides its type (a project value of another type is ignored). */
export interface RuleOption<V extends OptionValue = OptionValue> {
  default: V;
  description: string;
}

export type RuleOptions = Record<string, RuleOption>;

/** The values a rule sees for its options, typed from the defaults in its metadata. */
export type OptionValues<O extends RuleOptions> = { [K in keyof O]: Widen<O[K]['default']> };

type Widen<V> = V extends number ? number : V extends string ? string : V extends boolean ? boolean : never;

export interface RuleContext<V = Record<string, OptionValue>> {
  setup: Setup;
  analysis: Analysis;
  /** Rule options merged over the rule's defaults (project file / settings), each of its default's type. */
  options: V;
  /** For train-sample-mismatch: the paired file's documents, when pairing found one. */
  partners: PartnerDocument[];
  /** Role of this file in a pair, if any. */
  pairRole?: 'training' | 'sampling';
}

export interface RepairMeta {
  effects: readonly FixEffect[];
  everyFinding: boolean;
}

export interface RuleMeta<O extends RuleOptions = RuleOptions> {
  /** Exactly as in DESIGN section 5. */
  id: string;
  /** One line for `noiselint rules`. */
  summary: string;
  defaultSeverity: Severity;
  /** The repairs the rule offers: their effects, and whether every finding gets one; null for none. */
  repair: RepairMeta | null;
  /** Each option once, with its default and description; the docs list them from here. */
  options: O;
  /**
   * Markdown under the fixed headings (RULE_DOC_HEADINGS in docs.ts): What triggers it / What the
   * run loses / A flagged config / The repaired config / Effect on a trained checkpoint / Numbers
   * you can tune / Published sources. The two config blocks are run as tests.
   */
  docs: string;
}

export interface Rule<O extends RuleOptions = RuleOptions> {
  meta: RuleMeta<O>;
  check(ctx: RuleContext<OptionValues<O>>): RuleFinding[];
}

/**
 * A rule whose check sees its options typed from its metadata (`ctx.options.warnSignal` is a
 * number because its default is). The engine merges the project's values over the defaults and
 * drops any of the wrong type, so the check needs no fallback of its own.
 */
export function defineRule<O extends RuleOptions>(rule: Rule<O>): Rule {
  return rule;
}
