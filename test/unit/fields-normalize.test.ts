/** Spelling helpers: key normalisation and the edit distance behind suggestions. */
import { describe, expect, it } from 'vitest';
import { editDistance, inStyleOf, keySegments, normalizeKeySegment } from '../../server/src/fields';

describe('normalizeKeySegment', () => {
  it('makes snake, camel, kebab and private spellings equal', () => {
    const forms = ['num_train_timesteps', 'numTrainTimesteps', 'num-train-timesteps', 'NUM_TRAIN_TIMESTEPS'];
    expect(new Set(forms.map(normalizeKeySegment)).size).toBe(1);
    expect(normalizeKeySegment('_class_name')).toBe(normalizeKeySegment('className'));
    expect(normalizeKeySegment('_target_')).toBe('target');
  });

  it('splits dotted keys', () => {
    expect(keySegments('model.params.timesteps')).toEqual(['model', 'params', 'timesteps']);
  });
});

describe('editDistance', () => {
  it('matches textbook values', () => {
    // kitten -> sitting = 3 (the standard Levenshtein example, recalled from memory)
    expect(editDistance('kitten', 'sitting')).toBe(3);
    expect(editDistance('', 'abc')).toBe(3);
    expect(editDistance('same', 'same')).toBe(0);
    // adjacent transposition is one edit in the optimal-string-alignment variant
    expect(editDistance('linaer', 'linear')).toBe(1);
    // OSA does not edit a substring twice: "ca" -> "abc" is 3 (it would be 2 with unrestricted Damerau)
    expect(editDistance('ca', 'abc')).toBe(3);
  });

  it('stops early above the bound', () => {
    expect(editDistance('scaledlinear', 'sigmoid', 2)).toBe(3);
  });
});

describe('inStyleOf', () => {
  it('renders a suggestion with the separators and case the user wrote', () => {
    expect(inStyleOf('scaled_linear', 'scaled-linaer')).toBe('scaled-linear');
    expect(inStyleOf('scaled_linear', 'scaled_linaer')).toBe('scaled_linear');
    expect(inStyleOf('v_prediction', 'V_PREDICTON')).toBe('V_PREDICTION');
  });
});
