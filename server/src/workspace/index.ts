/** Project file, file discovery and pairing: the parts of the workspace the CLI and the language server share. */
export * from './project';
export * from './fs';
export * from './discover';
export * from './pairing';
export { WorkspaceSession } from './session';
