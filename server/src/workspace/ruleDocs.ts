/**
 * Where a rule id links to (LSP codeDescription, SARIF helpUri): a configured base URL, else the
 * rule pages shipped with this installation (file://), else the repository's docs/rules folder.
 */
import { existsSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { pathToFileURL } from 'node:url';

/** The repository's rule pages; `<base><id>.md`. The host is a placeholder until the project is published. */
export const REPOSITORY_RULE_DOCS = 'https://noiselint.example/docs/rules/';

let installedDocs: string | null | undefined;

/**
 * The docs/rules folder of this installation, looked up by walking up from the running bundle:
 * server/dist -> repository root, or the extension folder holding dist/server.js.
 */
export function findDocsFolder(): string | null {
  if (installedDocs !== undefined) return installedDocs;
  installedDocs = null;
  let dir = typeof __dirname === 'string' ? __dirname : null;
  while (dir) {
    const candidate = join(dir, 'docs', 'rules');
    if (existsSync(candidate)) {
      installedDocs = candidate;
      break;
    }
    const up = dirname(dir);
    if (up === dir) break;
    dir = up;
  }
  return installedDocs;
}

const pageCache = new Map<string, string>();

/** `docsFolder`: override the installation's folder (null: none), for tests. */
export function ruleDocsUrl(ruleId: string, baseSetting = '', docsFolder?: string | null): string {
  if (baseSetting) return `${baseSetting.endsWith('/') ? baseSetting : `${baseSetting}/`}${encodeURIComponent(ruleId)}.md`;
  const useCache = docsFolder === undefined;
  const cached = useCache ? pageCache.get(ruleId) : undefined;
  if (cached) return cached;
  const dir = useCache ? findDocsFolder() : docsFolder;
  const page = dir ? join(dir, `${ruleId}.md`) : null;
  const url = page && existsSync(page) ? pathToFileURL(page).href : `${REPOSITORY_RULE_DOCS}${encodeURIComponent(ruleId)}.md`;
  if (useCache) pageCache.set(ruleId, url);
  return url;
}
