export * from './types';
export { buildSetup, inferLatentSpace, SCHEDULE_CONCEPTS, type BuildSetupOptions } from './buildSetup';
export * from './defaults';
export {
  INHERITED_CONCEPTS,
  inheritSetup,
  inheritanceFrom,
  inheritedNote,
  trainingDocumentOf,
  type InheritedValue,
  type PartnerSetup,
  type ScheduleInheritance,
} from './inherit';
