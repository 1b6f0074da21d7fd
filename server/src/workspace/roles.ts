/** The role of a config file (training, sampling, mixed), read from its analysed documents. */
import { readFile } from '../core/api';
import type { Setup } from '../setup/types';
import { nodeFs, readTextFile, type WorkspaceFs } from './fs';
import type { FileRole, RoleProbe } from './pairing';
import { loadProject } from './projectFile';

/** File role from its documents' setups (only diffusion documents count). */
export function roleOfSetups(setups: readonly Setup[]): FileRole {
  const roles = new Set(setups.filter((s) => s.isDiffusionConfig).map((s) => s.role));
  if (roles.size === 0) return 'none';
  if (roles.size === 1 && roles.has('training')) return 'training';
  if (roles.size === 1 && roles.has('sampling')) return 'sampling';
  return 'mixed';
}

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

