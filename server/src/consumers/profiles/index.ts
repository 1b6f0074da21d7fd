import type { ConsumerFamily, FamilyId } from '../types';
import { CONFIG_OBJECT_FAMILY } from './configObject';
import { LATENT_DIFFUSION_FAMILY } from './latentDiffusion';
import { PIXEL_ARGS_FAMILY } from './pixelArgs';
import { SCHEDULER_CONFIG_FAMILY } from './schedulerConfig';
import { TRAINING_ARGS_FAMILY } from './trainingArgs';

export { CONFIG_OBJECT_FAMILY, CONFIG_OBJECT_COMPONENTS } from './configObject';
export { LATENT_DIFFUSION_FAMILY, LATENT_DIFFUSION_CLASSES } from './latentDiffusion';
export { SCHEDULER_CONFIG_FAMILY, SCHEDULER_CLASSES, SCHEDULER_META_KEYS } from './schedulerConfig';
export { PIXEL_ARGS_FAMILY } from './pixelArgs';
export { TRAINING_ARGS_FAMILY } from './trainingArgs';

export const GENERIC_FAMILY: ConsumerFamily = {
  id: 'generic',
  title: 'generic reading (no consuming code recognised)',
  dialect: { yaml: 'generic', json: 'generic' },
  classes: [],
};

/** Every family, in the order detection tries them. */
export const FAMILIES: ConsumerFamily[] = [
  SCHEDULER_CONFIG_FAMILY,
  LATENT_DIFFUSION_FAMILY,
  CONFIG_OBJECT_FAMILY,
  PIXEL_ARGS_FAMILY,
  TRAINING_ARGS_FAMILY,
  GENERIC_FAMILY,
];

export const FAMILY_IDS: FamilyId[] = FAMILIES.map((f) => f.id);

export function familyById(id: FamilyId): ConsumerFamily {
  return FAMILIES.find((f) => f.id === id) ?? GENERIC_FAMILY;
}
