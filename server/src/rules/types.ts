import type { Analysis } from '../analysis/analysis';
import type { Severity, FixEffect } from '../base/findings';
import type { Concept, ConceptValues } from '../fields/concepts';
import type { FieldSource, Setup } from '../setup/types';

/** A change stated in concepts; fix/ renders it as minimal text edits. */
export type ConceptEdit =
  | { kind: 'set'; concept: Concept; value: ConceptValues[Concept] }
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

export interface RuleContext {
  setup: Setup;
  analysis: Analysis;
  /** Rule options merged over the rule's defaults (project file / settings). */
  options: Record<string, number | string | boolean>;
  /** For train-sample-mismatch: the paired file's documents, when pairing found one. */
  partners: PartnerDocument[];
  /** Role of this file in a pair, if any. */
  pairRole?: 'training' | 'sampling';
}

export interface RuleOption {
  default: number | string | boolean;
  description: string;
}

export interface RepairMeta {
  effects: readonly FixEffect[];
  everyFinding: boolean;
}

export interface RuleMeta {
  /** Exactly as in DESIGN section 5. */
  id: string;
  /** One line for `noiselint rules`. */
  summary: string;
  defaultSeverity: Severity;
  /** The repairs the rule offers: their effects, and whether every finding gets one; null for none. */
  repair: RepairMeta | null;
  options: Record<string, RuleOption>;
  /**
   * Markdown under the fixed headings (RULE_DOC_HEADINGS in docs.ts): What triggers it / What the
   * run loses / A flagged config / The repaired config / Effect on a trained checkpoint / Numbers
   * you can tune / Published sources. The two config blocks are run as tests.
   */
  docs: string;
}

export interface Rule {
  meta: RuleMeta;
  check(ctx: RuleContext): RuleFinding[];
}
