export type { ResolvedProject, RuleSetting, FilePair } from './types';
export {
  DEFAULT_PROJECT,
  PROJECT_FILE_NAMES,
  ProjectFileError,
  clearProjectCache,
  findProjectFile,
  loadProject,
  loadProjectOfFile,
  parseProjectFile,
  resolveProjectData,
} from './projectFile';
