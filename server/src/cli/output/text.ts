/**
 * `check --format text`: one line per finding, `path:line:col: severity: message (noiselint rules
 * <rule-id>)`: 1-based line and column, as editors, terminals and problem matchers read them; the
 * rule id closes the line inside the command that explains it. Then one summary line, and one
 * line per budget given on the command line that the run exceeds.
 */
import type { Severity } from '../../base/findings';
import { allowedFix, NO_CONSENT } from '../../fix/select';
import { displayPath, Locator, summarize, type CheckReport } from './report';
import { printable, printableLine } from './printable';

export interface TextOptions {
  color: boolean;
}

const SGR = {
  reset: '\x1b[0m',
  bold: '\x1b[1m',
  dim: '\x1b[2m',
  red: '\x1b[31m',
  yellow: '\x1b[33m',
  blue: '\x1b[34m',
  green: '\x1b[32m',
};

const SEVERITY_COLOR: Record<Severity, string> = { error: SGR.red, warning: SGR.yellow, info: SGR.blue, hint: SGR.dim };

export function formatText(report: CheckReport, options: TextOptions): string {
  const paint = (code: string, s: string) => (options.color ? `${code}${s}${SGR.reset}` : s);
  const locate = new Locator(report);
  const lines: string[] = [];
  for (const file of report.files) {
    const path = printable(displayPath(report.cwd, file.path));
    for (const f of file.findings) {
      const { start } = locate.range(file.path, f.span);
      const where = `${path}:${start.line + 1}:${start.character + 1}`;
      lines.push(
        `${paint(SGR.bold, `${where}:`)} ${paint(SEVERITY_COLOR[f.severity], `${f.severity}:`)} ${printableLine(f.message)} ${paint(SGR.dim, `(noiselint rules ${f.rule})`)}`,
      );
    }
  }
  lines.push(summaryLine(report, paint));
  for (const b of report.outcome?.budgets ?? []) {
    if (!b.explicit || !b.exceeded) continue;
    const what = b.severity === 'hint' ? count(b.found, 'finding') : `${count(b.found, 'finding')} at ${b.severity} or above`;
    lines.push(paint(SGR.red, `Over budget: ${what}, ${b.allowed} may pass (--budget ${b.severity}=${b.allowed}).`));
  }
  return `${lines.join('\n')}\n`;
}

function count(n: number, word: string): string {
  return `${n} ${word}${n === 1 ? '' : 's'}`;
}

function summaryLine(report: CheckReport, paint: (code: string, s: string) => string): string {
  const s = report.outcome?.counted ?? summarize(report.files);
  const h = report.outcome?.hidden;
  const checked = `${count(report.files.length, 'file')} checked`;
  const skipped =
    (report.skipped.length ? `, ${report.skipped.length} skipped` : '') +
    (report.passedOver ? `, ${count(report.passedOver, 'other file')} passed over (no schedule or step-count key)` : '');
  const hidden =
    h && h.warnings + h.infos + h.hints > 0
      ? ` (${[h.warnings ? count(h.warnings, 'warning') : '', h.infos ? count(h.infos, 'info') : '', h.hints ? count(h.hints, 'hint') : '']
          .filter(Boolean)
          .join(', ')} not listed: --show ${report.outcome!.show})`
      : '';
  const total = s.errors + s.warnings + s.infos + s.hints;
  // Never green on nothing checked.
  if (total === 0 && !report.files.some((f) => f.isDiffusionConfig)) {
    const read = report.files.length + (report.passedOver ?? 0);
    return `No diffusion configs found: nothing checked (${count(read, 'file')} read${report.skipped.length ? `, ${report.skipped.length} skipped` : ''}).`;
  }
  if (total === 0) return `${paint(SGR.green, 'No findings')} in ${checked}${skipped}${hidden}.`;
  const parts = [
    s.errors ? paint(SGR.red, count(s.errors, 'error')) : '',
    s.warnings ? paint(SGR.yellow, count(s.warnings, 'warning')) : '',
    s.infos ? paint(SGR.blue, count(s.infos, 'info')) : '',
    s.hints ? count(s.hints, 'hint') : '',
  ].filter(Boolean);
  // Only what a plain `noiselint fix` applies: findings with a safe fix.
  const plainFix = allowedFix(NO_CONSENT);
  const fixable = report.files.reduce((n, f) => n + f.findings.filter((x) => x.fixes.some(plainFix)).length, 0);
  const fixNote = fixable ? `; ${fixable} fixable by noiselint fix (--dry-run shows the changes)` : '';
  return `${parts.join(', ')} in ${checked}${skipped}${hidden}${fixNote}.`;
}
