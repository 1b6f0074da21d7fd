/**
 * Every spelling a fix writes must be one the reader accepts, so that a fixed file reads back as
 * intended: inserted keys in each key style, and every enum value family.
 */
import { describe, expect, it } from 'vitest';
import { CONCEPTS, type Concept } from '../../server/src/fields/concepts';
import { INSERT_KEY, SAMPLER_SPELLINGS, SCHEDULE_SPELLINGS, SPACING_SPELLINGS, TARGET_SPELLINGS } from '../../server/src/fix/spellings';
import { setupOf } from './helpers';

/** A value of the right type for each concept, as YAML text, and what it reads back as. */
const SAMPLE: Record<Concept, [string, unknown]> = {
  trainSteps: ['1000', 1000],
  betaSchedule: ['scaled_linear', 'scaled_linear'],
  betaStart: ['0.00085', 0.00085],
  betaEnd: ['0.012', 0.012],
  betas: ['[0.1, 0.2, 0.3]', [0.1, 0.2, 0.3]],
  zeroTerminalSnr: ['true', true],
  predictionTarget: ['v', 'v'],
  timestepSpacing: ['trailing', 'trailing'],
  stepsOffset: ['1', 1],
  sampleSteps: ['30', 30],
  guidanceScale: ['7.5', 7.5],
  guidanceRescale: ['0.7', 0.7],
  offsetNoise: ['0.05', 0.05],
  minSnrGamma: ['5.0', 5],
  thresholding: ['false', false],
  latentSpace: ['true', true],
  sigmaMin: ['0.002', 0.002],
  sigmaMax: ['80.0', 80],
  rho: ['7.0', 7],
  flowShift: ['3.0', 3],
  resolution: ['1024', 1024],
  sampler: ['ddim', 'ddim'],
  karrasSigmas: ['true', true],
};

describe('inserted keys are read back as their concept', () => {
  for (const concept of CONCEPTS) {
    const keys = INSERT_KEY[concept];
    if (!keys) continue;
    for (const [style, key] of Object.entries(keys)) {
      it(`${concept} (${style}): ${key}`, () => {
        const [text, value] = SAMPLE[concept];
        const { setup } = setupOf(`${key}: ${text}\n`);
        const field = setup.fields[concept];
        expect(field?.source?.key).toBe(key);
        expect(field?.value).toEqual(value);
      });
    }
  }
});

describe('enum value spellings are read back as the value', () => {
  const keyOf = { long: 'prediction_type', short: 'parameterization', words: 'prediction_type', pred: 'objective' } as const;
  for (const [family, spellings] of Object.entries(TARGET_SPELLINGS) as [keyof typeof keyOf, Record<string, string>][]) {
    for (const [target, spelled] of Object.entries(spellings)) {
      it(`target ${target} as ${spelled} (${family})`, () => {
        const { setup } = setupOf(`${keyOf[family]}: ${spelled}\n`);
        expect(setup.fields.predictionTarget?.value).toBe(target);
        expect(setup.fields.predictionTarget?.source).toBeTruthy();
      });
    }
  }
  for (const [family, spellings] of Object.entries(SCHEDULE_SPELLINGS)) {
    for (const [kind, spelled] of Object.entries(spellings)) {
      it(`schedule ${kind} as ${spelled} (${family})`, () => {
        expect(setupOf(`beta_schedule: ${spelled}\n`).setup.fields.betaSchedule?.value).toBe(kind);
      });
    }
  }
  for (const [spacing, spelled] of Object.entries(SPACING_SPELLINGS)) {
    it(`spacing ${spacing} as ${spelled}`, () => {
      expect(setupOf(`timestep_spacing: ${spelled}\n`).setup.fields.timestepSpacing?.value).toBe(spacing);
    });
  }
  for (const [sampler, spelled] of Object.entries(SAMPLER_SPELLINGS)) {
    it(`sampler ${sampler} as ${spelled}`, () => {
      expect(setupOf(`sampler_name: ${spelled}\n`).setup.fields.sampler?.value).toBe(sampler);
    });
  }
});
