export * from './types';
export { buildSetup, inferLatentSpace, SCHEDULE_CONCEPTS, type BuildSetupOptions } from './buildSetup';
export * from './defaults';
