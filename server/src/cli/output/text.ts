/**
 * `check --format text`: one line per finding, `path:line:col severity rule message` (1-based
 * line and column, as editors and terminals jump to them), then one summary line.
 */
import type { Severity } from '../../base/findings';
import { displayPath, Locator, summarize, type CheckReport, type Summary } from './report';

export interface TextOptions {
  color: boolean;
  /** Warnings and below were left out of the report (--quiet); the summary says how many. */
  hidden?: Summary;
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

/** Control characters in a message or path would let a config file drive the terminal. */
function printable(s: string): string {
  // eslint-disable-next-line no-control-regex
  return s.replace(/[\u0000-\u0008\u000b-\u001f\u007f-\u009f]/g, '?').replace(/\r?\n/g, ' ');
}

export function formatText(report: CheckReport, options: TextOptions): string {
  const paint = (code: string, s: string) => (options.color ? `${code}${s}${SGR.reset}` : s);
  const locate = new Locator(report);
  const lines: string[] = [];
  for (const file of report.files) {
    const path = printable(displayPath(report.cwd, file.path));
    for (const f of file.findings) {
      const { start } = locate.range(file.path, f.span);
      const where = `${path}:${start.line + 1}:${start.character + 1}`;
      lines.push(`${paint(SGR.bold, where)} ${paint(SEVERITY_COLOR[f.severity], f.severity)} ${paint(SGR.dim, f.rule)} ${printable(f.message)}`);
    }
  }
  lines.push(summaryLine(report, options, paint));
  return `${lines.join('\n')}\n`;
}

function count(n: number, word: string): string {
  return `${n} ${word}${n === 1 ? '' : 's'}`;
}

function summaryLine(report: CheckReport, options: TextOptions, paint: (code: string, s: string) => string): string {
  const s = summarize(report.files);
  const checked = `${count(report.files.length, 'file')} checked`;
  const skipped = report.skipped.length ? `, ${report.skipped.length} skipped` : '';
  const hidden = options.hidden && options.hidden.warnings + options.hidden.infos + options.hidden.hints > 0
    ? ` (${[
        options.hidden.warnings ? count(options.hidden.warnings, 'warning') : '',
        options.hidden.infos ? count(options.hidden.infos, 'info') : '',
        options.hidden.hints ? count(options.hidden.hints, 'hint') : '',
      ].filter(Boolean).join(', ')} not shown: --quiet)`
    : '';
  const total = s.errors + s.warnings + s.infos + s.hints;
  if (total === 0) return `${paint(SGR.green, 'No findings')} in ${checked}${skipped}${hidden}.`;
  const parts = [
    s.errors ? paint(SGR.red, count(s.errors, 'error')) : '',
    s.warnings ? paint(SGR.yellow, count(s.warnings, 'warning')) : '',
    s.infos ? paint(SGR.blue, count(s.infos, 'info')) : '',
    s.hints ? count(s.hints, 'hint') : '',
  ].filter(Boolean);
  const fixable = report.files.reduce((n, f) => n + f.findings.filter((x) => x.fixes.length > 0).length, 0);
  const fixNote = fixable ? `; ${fixable} with a fix (noiselint fix --dry-run shows them)` : '';
  return `${parts.join(', ')} in ${checked}${skipped}${hidden}${fixNote}.`;
}
