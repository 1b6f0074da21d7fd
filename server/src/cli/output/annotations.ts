/**
 * `check --format annotations`: one CI workflow command per finding,
 * `::error file=<path>,line=<l>,endLine=<l>,col=<c>,endColumn=<c>,title=<rule>::<message>`
 * (1-based lines and columns), `::warning` and `::notice` for the lower severities, which a CI run
 * shows on the changed lines of a review. Run errors (unreadable inputs) become `::error` lines
 * without a file. The last line is a plain summary.
 */
import type { Severity } from '../../base/findings';
import { displayPath, Locator, summarize, type CheckReport } from './report';

type Level = 'error' | 'warning' | 'notice';
const LEVEL: Record<Severity, Level> = { error: 'error', warning: 'warning', info: 'notice', hint: 'notice' };

/** Message text: `%`, CR and LF are escaped so a message stays one command. */
export function escapeData(s: string): string {
  return s.replace(/%/g, '%25').replace(/\r/g, '%0D').replace(/\n/g, '%0A');
}

/** Property values also escape `:` and `,`, which separate the properties. */
export function escapeProperty(s: string): string {
  return escapeData(s).replace(/:/g, '%3A').replace(/,/g, '%2C');
}

function command(level: Level, properties: [string, string | number][], message: string): string {
  const props = properties.map(([k, v]) => `${k}=${escapeProperty(String(v))}`).join(',');
  return `::${level}${props ? ` ${props}` : ''}::${escapeData(message)}`;
}

export function formatAnnotations(report: CheckReport): string {
  const locate = new Locator(report);
  const lines: string[] = [];
  for (const n of report.notices) lines.push(command(n.level === 'error' ? 'error' : 'warning', [['title', 'noiselint']], n.message));
  for (const file of report.files) {
    const path = displayPath(report.cwd, file.path);
    for (const f of file.findings) {
      const { start, end } = locate.range(file.path, f.span);
      lines.push(
        command(
          LEVEL[f.severity],
          [
            ['file', path],
            ['line', start.line + 1],
            ['endLine', end.line + 1],
            ['col', start.character + 1],
            ['endColumn', end.character + 1],
            ['title', `noiselint ${f.rule}`],
          ],
          f.message,
        ),
      );
    }
  }
  const s = summarize(report.files);
  const configs = report.files.filter((f) => f.isDiffusionConfig).length;
  lines.push(
    `noiselint: ${s.errors} errors, ${s.warnings} warnings, ${s.infos + s.hints} notes in ${configs} configs checked (${report.files.length} files read).`,
  );
  return `${lines.join('\n')}\n`;
}
