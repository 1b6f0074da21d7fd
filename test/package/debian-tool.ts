/**
 * A Debian command the tests drive for real (nvim, pre-commit): found on PATH, or installed with
 * apt-get when this is Debian and we are root (as in CI), the way test/e2e/setup.sh installs its
 * packages. Returns null, with the reason, only where apt is impossible; the caller then skips
 * loudly.
 */
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';

function onPath(command: string): boolean {
  return spawnSync('sh', ['-c', `command -v ${command}`], { encoding: 'utf8' }).status === 0;
}

export function ensureDebianTool(command: string, aptPackage: string): { ok: true } | { ok: false; reason: string } {
  if (onPath(command)) return { ok: true };
  if (!existsSync('/usr/bin/apt-get')) return { ok: false, reason: `${command} is not installed and this system has no apt-get` };
  if (typeof process.getuid === 'function' && process.getuid() !== 0) {
    return { ok: false, reason: `${command} is not installed and apt-get needs root (run: sudo apt-get install -y ${aptPackage})` };
  }
  const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
  let install = spawnSync('apt-get', ['install', '-y', '--no-install-recommends', aptPackage], { encoding: 'utf8', env, timeout: 600_000 });
  if (install.status !== 0) {
    // The package lists may be missing on a fresh machine.
    spawnSync('apt-get', ['update'], { encoding: 'utf8', env, timeout: 600_000 });
    install = spawnSync('apt-get', ['install', '-y', '--no-install-recommends', aptPackage], { encoding: 'utf8', env, timeout: 600_000 });
  }
  if (install.status !== 0 || !onPath(command)) {
    return { ok: false, reason: `apt-get install ${aptPackage} failed: ${(install.stderr || install.stdout).trim().split('\n').slice(-1)[0]}` };
  }
  return { ok: true };
}
