export type { ResolvedProject, RuleSetting, FilePair } from '../engine/types';
