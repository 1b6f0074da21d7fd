/**
 * Where a diagnostic's rule id links to: the `docsBaseUrl` setting, else the rule pages bundled
 * next to the server (file://), else the repository's docs/rules folder.
 */
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';

/** The repository's rule pages; `<base><id>.md`. The host is a placeholder until the project is published. */
export const REPOSITORY_RULE_DOCS = 'https://noiselint.example/docs/rules/';

/** Folders (relative to the running bundle) that may hold the generated rule pages. */
const BUNDLED_CANDIDATES = ['../../docs/rules', '../docs/rules', 'docs/rules'];

let bundledDir: string | null | undefined;

function bundledDocsDir(): string | null {
  if (bundledDir !== undefined) return bundledDir;
  bundledDir = null;
  const here = typeof __dirname === 'string' ? __dirname : null;
  if (here) {
    for (const rel of BUNDLED_CANDIDATES) {
      const dir = join(here, rel);
      if (existsSync(dir)) {
        bundledDir = dir;
        break;
      }
    }
  }
  return bundledDir;
}

const pageCache = new Map<string, string>();

export function ruleDocsUrl(ruleId: string, baseSetting: string): string {
  if (baseSetting) return `${baseSetting.endsWith('/') ? baseSetting : `${baseSetting}/`}${encodeURIComponent(ruleId)}.md`;
  const cached = pageCache.get(ruleId);
  if (cached) return cached;
  const dir = bundledDocsDir();
  const page = dir ? join(dir, `${ruleId}.md`) : null;
  const url = page && existsSync(page) ? pathToFileURL(page).href : `${REPOSITORY_RULE_DOCS}${encodeURIComponent(ruleId)}.md`;
  pageCache.set(ruleId, url);
  return url;
}
