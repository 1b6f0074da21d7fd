/**
 * @noiselint/shared-math: closed-form numerics of diffusion noise schedules (DESIGN section 4).
 * Pure functions, no dependencies, no I/O. Invalid input gives a MathResult problem or NaN,
 * never an exception.
 */
export {
  type MathResult,
  TRAIN_STEPS_MIN,
  TRAIN_STEPS_MAX,
  SAMPLE_STEPS_MIN,
  SAMPLE_STEPS_MAX,
  checkBetas,
  checkTrainSteps,
  checkSampleSteps,
} from './guards';
export {
  linearBetas,
  scaledLinearBetas,
  cosineBetas,
  sigmoidBetas,
  LINEAR_BETA_START,
  LINEAR_BETA_END,
  LINEAR_TRAIN_STEPS,
  COSINE_OFFSET,
  COSINE_MAX_BETA,
  SIGMOID_RANGE,
} from './schedules';
export {
  alphaBarFromBetas,
  snrFromAlphaBar,
  logSnrFromAlphaBar,
  signalAmplitude,
  noiseAmplitude,
  sigmaFromAlphaBar,
  alphaBarFromSigma,
  alphaBarFromSnr,
  ZERO_SNR_ALPHA_BAR_CLAMP,
} from './snr';
export { rescaleZeroTerminalSnr } from './rescale';
export { type SpacingKind, SPACING_KINDS, QUADRATIC_SPACING_FRACTION, samplingTimesteps } from './spacing';
export { respacedTimesteps } from './respacing';
export { type TargetKind, TARGET_KINDS, noisySample, vFromEpsX0, x0FromV, x0FromEps, epsFromV } from './targets';
export { guidanceRescale, classifierFreeGuidance, populationStd, mean, COMMON_GUIDANCE_SCALE, COMMON_GUIDANCE_RESCALE } from './guidance';
export { minSnrWeight, MIN_SNR_GAMMA_DEFAULT } from './weighting';
export {
  karrasSigmas,
  snrFromSigma,
  flowSnr,
  flowTimestepShift,
  resolutionLogSnrShift,
  KARRAS_SIGMA_MIN,
  KARRAS_SIGMA_MAX,
  KARRAS_RHO,
  SIGMA_DATA_DEFAULT,
} from './continuous';
export {
  type ScheduleParams,
  type ScheduleNumbers,
  type ReadonlyFloat64Array,
  LruCache,
  computeSchedule,
  clearScheduleCache,
  scheduleCacheStats,
} from './cache';
