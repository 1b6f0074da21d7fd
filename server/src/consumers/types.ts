/**
 * The consumer profile stage: for each document, which code consumes it (a scheduler class, a
 * model class, a training script's arguments) and which loader parses it. Profiles are data, one
 * file per family under profiles/; the decision and its evidence travel with the setup so that
 * explain, hover and the JSON output can show them.
 */
import type { Concept, ConceptValues, TimestepSpacing } from '../fields/concepts';
import type { DialectId } from './dialects/types';

export type FamilyId = 'scheduler-config' | 'latent-diffusion' | 'config-object' | 'training-args' | 'pixel-args' | 'generic';

export type ConceptDefaults = { [C in Concept]?: ConceptValues[C] };

/**
 * How a consumer turns a step count into sampling timesteps:
 * - 'standard': DESIGN section 4 (leading floor(T/N) stride + offset; linspace; trailing);
 * - 'n-plus-one': the multistep solvers' variant, N + 1 points with the last dropped (leading
 *   stride floor(T/(N+1)); linspace round(linspace(0, T-1, N+1)) reversed, last dropped);
 * - 'ldm-ddim': the latent-diffusion code's own DDIM selection, uniform stride floor(T/N)
 *   plus one (make_ddim_timesteps adds 1 to each step);
 * - 'flow': flow matching (shifted t from 1 down);
 * - 'even-from-last': the config-object code's legacy DDPM discretization, roughly equally spaced
 *   steps from T - 1 down (see timesteps.ts).
 * - 'respaced': the pixel-model code's timestep respacing string (`"ddim50"`, `"250"`,
 *   `"10,15,20"`), see timesteps.ts.
 * - 'lcm': the latent consistency scheduler's own selection from its original_inference_steps
 *   grid, whatever the spacing says (see timesteps.ts).
 */
export type TimestepRule = 'standard' | 'n-plus-one' | 'ldm-ddim' | 'flow' | 'even-from-last' | 'respaced' | 'lcm';

/** One consuming class or script (a scheduler class, a model class, an argument parser). */
export interface ConsumerClass {
  /** As written in the file (`DDIMScheduler`, `ldm.models.diffusion.ddpm.LatentDiffusion`). */
  name: string;
  /** Where the facts below come from: library, version and file. */
  source: string;
  /** Keys it reads, exactly as spelled (its keyword arguments / config fields). */
  keys: string[];
  /** The key it reads each concept from (the spelling a fix writes). Concepts absent here it cannot take. */
  conceptKeys: Partial<Record<Concept, string>>;
  /** What it uses when a key is absent. */
  defaults: ConceptDefaults;
  /** Constructor defaults of keys that matter on their own (separate keys of one concept). */
  keyDefaults?: Record<string, string | number | boolean | null>;
  timesteps: TimestepRule;
  /** Spacing used when the class reads no spacing key (fixed by its code). */
  fixedSpacing?: TimestepSpacing;
  /**
   * Concepts the class keeps a key for (so the key is no error) but never reads: the key stands
   * for nothing, and, like any concept the class does not take, a fix cannot write it
   * (LCMScheduler keeps timestep_spacing in its config and its step selection ignores it).
   */
  inertKeys?: Partial<Record<Concept, string>>;
  /** What a value means to this class when that differs from the alias table (key -> written -> tool's member). */
  valueMeanings?: Record<string, Record<string, string>>;
  /** Accepted values per key (as written), when the class checks them. */
  enums?: Record<string, string[]>;
  /** With Karras sigmas on, the first sampled sigma is the largest training sigma whatever the spacing. */
  karrasStartsAtMax?: boolean;
  /**
   * With its zero-SNR rescale flag on, the class itself clamps the last abar to 2^-24, so its first
   * sigma is finite (about 4096).
   */
  clampsZeroSnrSigma?: boolean;
  /** Its schedule is a continuous sigma range (Karras et al. 2022), not a list of betas. */
  continuousSigmas?: boolean;
  /** No rescale flag, but an explicit beta list key: a zero-SNR fix writes the rescaled list there. */
  rescaleViaBetas?: boolean;
  /** Two keys of the class that one concept stands for but the class reads separately. */
  separateKeys?: string[][];
  /**
   * What to tell the user when a fix would need a concept this class cannot take, per concept
   * (e.g. "pass guidance_rescale to the pipeline call"). `{steps}` stands for the document's
   * sampling step count (250 when it has none).
   */
  cannotExpress?: Partial<Record<Concept, string>>;
  /** Flat argument sets (see ArgsReading): how the script reads keys the alias table does not know. */
  args?: ArgsReading;
  /**
   * The basis of a default, where "the class's default for an absent key" would mislead (the
   * value comes from somewhere else, such as the base model's own scheduler config).
   */
  defaultNotes?: Partial<Record<Concept, string>>;
  /**
   * Keys that mark a flat document as read by this class, when a family has several (the
   * family's `signature` otherwise), and how many must be there.
   */
  signature?: string[];
  signatureMin?: number;
}

/**
 * How a training or sampling script reads a flat argument set, beyond the alias table. Only the
 * keys named in `conceptKeys` (and here) stand for concepts: a key whose name merely resembles a
 * concept's (`skip_image_resolution`, `sample_sampler` for a preview scheduler built elsewhere)
 * is the script's own setting.
 */
export interface ArgsReading {
  /**
   * Keys the script tests by truth value (`if args.zero_terminal_snr:`), each standing for a
   * concept value (`predict_xstart: true` -> x0). Python's truth value applies: a non-empty string
   * such as "false" is true, so a string there is reported rather than read as a word.
   */
  booleanConcepts?: Record<string, { concept: Concept; whenTrue: string | boolean; whenFalse: string | boolean }>;
  /** The key of a timestep respacing string (sampling steps and spacing both come from it). */
  respacingKey?: string;
  /** Concepts derived from a compound value: a fix cannot set them on their own. */
  derivedConcepts?: Concept[];
  /** Values a fix may write per concept (others cannot be expressed: cannotExpress says what to do). */
  writableValues?: Partial<Record<Concept, (string | number | boolean)[]>>;
  /** The linear beta range scales with referenceSteps / T (betaStart = start * referenceSteps / T). */
  linearRangePerStep?: { start: number; end: number; referenceSteps: number; basis: string };
  /** The loader merges the first level of tables into one namespace (the TOML sections of a config file). */
  flattensSections?: boolean;
  /**
   * The script takes its training schedule from the base model's own scheduler config, not from
   * its code: the schedule is unknown here, so findings about the schedule alone are not raised.
   */
  scheduleFromBaseModel?: boolean;
}

/**
 * One sub-config of a config-object document (`{ target: <class path>, params: {...} }`), e.g. the
 * denoiser's discretization or the sampler's guider. Its class reads its own keys from `params`.
 */
export type ComponentRole =
  | 'engine'
  | 'denoiser'
  | 'scaling'
  | 'discretization'
  | 'sampler'
  | 'sampler-discretization'
  | 'guider'
  | 'loss'
  | 'sigma-sampler'
  | 'sigma-sampler-discretization'
  | 'first-stage';

/** A class that a component's `target` may name; the data of a profile (see profiles/configObject.ts). */
export interface ComponentClass extends ConsumerClass {
  /** Last segment of the class path (`LegacyDDPMDiscretization`): matched whatever the module prefix. */
  shortName: string;
  roles: ComponentRole[];
  /** What the class itself implies, whatever its keys say (EpsScaling: an epsilon target). */
  implies?: ConceptDefaults;
  /** The sentence that explains an implied value. */
  impliesNote?: string;
  /** Keys that must be present (no constructor default): absent, the class raises at start-up. */
  required?: string[];
}

export interface ConsumerFamily {
  id: FamilyId;
  /** Shown in explain: "scheduler config saved by the open diffusion library". */
  title: string;
  /** Loader assumed for the family when neither the project file nor the file says. */
  dialect: { yaml: DialectId; json: DialectId; toml?: DialectId };
  /** Where in the document the consumer's keys sit (dotted path from the root; '' for the root). */
  sectionPath?: string;
  classes: ConsumerClass[];
  /** Words whose presence in the raw text lets a file of this family past the engine's prefilter. */
  textHints?: string[];
  /** Keys whose presence marks a flat document of this family, and how many must be there. */
  signature?: string[];
  signatureMin?: number;
}

/** The decision for one document, with its evidence; plain data for explain, hover and JSON. */
export interface ConsumerDecision {
  family: FamilyId;
  familyTitle: string;
  /** The consuming class, when the family has several and the file names one. */
  className: string | null;
  classSource: string | null;
  /** 'file': evidence in the file; 'project': the project file chose it; 'fallback': nothing matched. */
  basis: 'file' | 'project' | 'fallback';
  evidence: string[];
  dialect: DialectId;
  dialectTitle: string;
  dialectBasis: 'file' | 'project' | 'family' | 'extension';
}

/** `consumers:` entry of the project file (validated in workspace/projectFile.ts). */
export interface ConsumerSetting {
  /** Globs relative to the project root. */
  files: string[];
  /** A consumer family id (scheduler-config, latent-diffusion, ...). */
  consumer?: FamilyId;
  /** A class of that family, e.g. EulerDiscreteScheduler. */
  class?: string;
  dialect?: DialectId;
}
