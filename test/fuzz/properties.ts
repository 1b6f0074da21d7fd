/**
 * The fuzz properties, by name. The vitest file runs each with a short budget; `npm run fuzz`
 * (scripts/fuzz.mjs) runs them with a long one and prints the seed to replay a failure.
 */
import fc from 'fast-check';
import { anyConfigArb, configArb, mutatedConfigArb, pairArb } from './configGen';
import { checkConfig, type CheckStats } from './invariants';

export interface NamedProperty {
  name: string;
  description: string;
  // Properties differ in their inputs (one config, or a pair).
  // eslint-disable-next-line @typescript-eslint/no-explicit-any -- each property has its own argument tuple
  property: (stats: CheckStats) => fc.IProperty<any>;
}

export const PROPERTIES: NamedProperty[] = [
  {
    name: 'generated',
    description: 'generated YAML/JSON/JSONC configs: analyzeText returns, spans in range, fixes apply cleanly',
    property: (stats) => fc.property(configArb, (c) => void checkConfig(c, stats)),
  },
  {
    name: 'mutated',
    description: 'generated and seed configs with random text mutations (syntax bits, CR/LF swaps, surrogates)',
    property: (stats) => fc.property(mutatedConfigArb, (c) => void checkConfig(c, stats)),
  },
  {
    name: 'paired',
    description: 'a sampling config checked against a generated training partner (train-sample-mismatch, related spans in the partner)',
    property: (stats) => fc.property(pairArb, ([sampling, training]) => void checkConfig(sampling, stats, { config: training, role: 'training' })),
  },
  {
    name: 'mixed',
    description: 'the mix of both, plus the unmodified seed configs',
    property: (stats) => fc.property(anyConfigArb, (c) => void checkConfig(c, stats)),
  },
];

export function newStats(): CheckStats {
  return { findings: 0, fixes: 0, rules: new Set() };
}
