/** The role of a config file on disk (training, sampling, mixed), read from its analysed documents. */
import { readFile } from '../engine/api';
import { nodeFs, readTextFile, type WorkspaceFs } from './fs';
import { roleOfSetups, type FileRole, type RoleProbe } from './pairing';
import { loadProject } from './projectFile';

/** Reads and analyses a file from disk to find its role (memoised per probe). */
export function diskRoleProbe(fs: WorkspaceFs = nodeFs): RoleProbe {
  const memo = new Map<string, FileRole>();
  return (path) => {
    let role = memo.get(path);
    if (role) return role;
    role = 'none';
    try {
      const project = loadProject(path, fs);
      const read = readTextFile(fs, path, project.limits.maxFileBytes);
      if (read.ok) role = roleOfSetups(readFile(read.text, { path, project }).documents.map((d) => d.setup));
    } catch {
      // An unreadable or unanalysable file simply has no role.
    }
    memo.set(path, role);
    return role;
  };
}


export { roleOfSetups };
