/**
 * Where a rule id links to (LSP codeDescription, SARIF helpUri): `<base>/<id>.md` under an https
 * base the user configured, and otherwise no link at all. A path on the machine that ran the check
 * (file://) means nothing to whoever reads the report or the diagnostic elsewhere, so none is made.
 */

/** The base as given, when it is an absolute https URL; null for anything else (empty, http, file). */
export function httpsDocsBase(base: string | undefined): string | null {
  const trimmed = (base ?? '').trim();
  if (!trimmed) return null;
  try {
    const url = new URL(trimmed);
    return url.protocol === 'https:' && url.host ? trimmed : null;
  } catch {
    return null;
  }
}

/** The rule page's URL under an https base; null without one. */
export function ruleDocsUrl(ruleId: string, base: string | undefined): string | null {
  const https = httpsDocsBase(base);
  if (!https) return null;
  return `${https.endsWith('/') ? https : `${https}/`}${encodeURIComponent(ruleId)}.md`;
}
