/**
 * JSON Schema (draft-07) of the project file, built from the same tables the loader validates
 * against: the rule registry (ids, option names, types and defaults), the concept vocabulary and
 * the limit ranges. The build writes it to schemas/noiselint.project.schema.json; the package and
 * the VS Code extension ship it, so editors complete and check the project file as it is typed.
 * The loader stays the authority: the schema cannot say "no '..' in a glob".
 */
import { SEVERITIES } from '../base/findings';
import { CONCEPTS } from '../fields/concepts';
import { ALL_RULE_METAS } from '../rules';
import type { RuleMeta } from '../rules/types';
import { FAMILIES, FAMILY_IDS } from '../consumers/profiles';
import { DIALECT_IDS } from '../consumers/dialects';
import { LIMIT_RANGES, TOP_LEVEL_FIELDS } from './projectFile';

export const PROJECT_SCHEMA_FILE = 'noiselint.project.schema.json';

type Schema = Record<string, unknown>;

const LIMIT_DESCRIPTIONS: Record<keyof typeof LIMIT_RANGES, string> = {
  maxFileBytes: 'Largest config file read, in bytes (default 5 MB).',
  maxNesting: 'Deepest nesting of mappings and lists (default 256).',
  maxListLength: 'Longest list (default 200000).',
  maxAliasCount: 'Most YAML alias expansions per file (default 1000).',
};

const FIELD_DESCRIPTIONS: Record<string, string> = {
  include: 'Globs relative to this folder: only matching files are found when walking folders.',
  exclude: 'Globs relative to this folder: matching files are skipped when walking folders.',
  rules: 'Per rule id: a severity (off turns the rule off), or { severity, options }.',
  aliases: 'Extra key spellings per concept, added to the built-in alias table.',
  latentSpace: 'Whether the models denoise latents, for files that do not say.',
  pairs: 'Training and sampling files that must agree; paths relative to this folder.',
  autoPair: 'Pair a training and a sampling file of the same folder automatically (default true).',
  limits: 'Bounds on reading a config file.',
  consumers: 'Who reads matching files: a consumer family (and class) and/or a loader dialect, per glob.',
};

function globs(description: string): Schema {
  const glob = { type: 'string', minLength: 1, pattern: '^(?![A-Za-z]:[\\\\/])(?!/)' };
  return { description, anyOf: [glob, { type: 'array', items: glob }] };
}

function ruleSchema(meta: RuleMeta): Schema {
  const severity = { enum: [...SEVERITIES, 'off'], description: `Default: ${meta.defaultSeverity}.` };
  const options: Record<string, Schema> = {};
  for (const [name, option] of Object.entries(meta.options)) {
    options[name] = { type: typeof option.default, default: option.default, description: option.description };
  }
  return {
    description: meta.summary,
    anyOf: [
      severity,
      {
        type: 'object',
        additionalProperties: false,
        properties: {
          severity,
          options: { type: 'object', additionalProperties: false, properties: options },
        },
      },
    ],
  };
}

export function projectFileSchema(): Schema {
  const rules: Record<string, Schema> = {};
  for (const meta of ALL_RULE_METAS) rules[meta.id] = ruleSchema(meta);
  const spelling = { type: 'string', minLength: 1, pattern: '\\S' };
  const aliases: Record<string, Schema> = {};
  for (const concept of CONCEPTS) aliases[concept] = { anyOf: [spelling, { type: 'array', items: spelling }] };
  const limits: Record<string, Schema> = {};
  for (const [key, [min, max]] of Object.entries(LIMIT_RANGES)) {
    limits[key] = { type: 'integer', minimum: min, maximum: max, description: LIMIT_DESCRIPTIONS[key as keyof typeof LIMIT_RANGES] };
  }
  const path = { type: 'string', minLength: 1, pattern: '\\S' };
  const properties: Record<string, Schema> = {
    include: globs(FIELD_DESCRIPTIONS.include!),
    exclude: globs(FIELD_DESCRIPTIONS.exclude!),
    rules: { description: FIELD_DESCRIPTIONS.rules, type: 'object', additionalProperties: false, properties: rules },
    aliases: { description: FIELD_DESCRIPTIONS.aliases, type: 'object', additionalProperties: false, properties: aliases },
    latentSpace: { description: FIELD_DESCRIPTIONS.latentSpace, type: 'boolean' },
    pairs: {
      description: FIELD_DESCRIPTIONS.pairs,
      type: 'array',
      items: { type: 'object', additionalProperties: false, required: ['training', 'sampling'], properties: { training: path, sampling: path } },
    },
    autoPair: { description: FIELD_DESCRIPTIONS.autoPair, type: 'boolean', default: true },
    limits: { description: FIELD_DESCRIPTIONS.limits, type: 'object', additionalProperties: false, properties: limits },
    consumers: {
      description: FIELD_DESCRIPTIONS.consumers,
      type: 'array',
      items: {
        type: 'object',
        additionalProperties: false,
        required: ['files'],
        properties: {
          files: globs('Globs relative to this folder: the files this entry is about.'),
          consumer: { enum: [...FAMILY_IDS] },
          class: { type: 'string', enum: [...new Set(FAMILIES.flatMap((f) => f.classes.map((c) => c.name)))] },
          dialect: { enum: [...DIALECT_IDS] },
        },
      },
    },
  };
  for (const field of TOP_LEVEL_FIELDS) if (!properties[field]) throw new Error(`project schema: no entry for field ${field}`);
  return {
    $schema: 'http://json-schema.org/draft-07/schema#',
    title: 'noiselint project file',
    description: 'Settings of one folder tree for noiselint (noiselint.project.yaml, .yml or .json). Every field is optional.',
    // An empty YAML file is a valid project file (all defaults).
    type: ['object', 'null'],
    additionalProperties: false,
    properties,
  };
}

export function projectFileSchemaText(): string {
  return `${JSON.stringify(projectFileSchema(), null, 2)}\n`;
}
