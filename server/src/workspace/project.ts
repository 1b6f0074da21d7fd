export type { ResolvedProject, RuleSetting, FilePair } from './types';
