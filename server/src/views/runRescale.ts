/** The run rescale's before/after table as plain text (CLI output, editor preview). */
import type { BeforeAfter, RunPlan } from '../fix/runRescale';

function cell(x: number | null, digits = 4): string {
  if (x === null) return '-';
  if (x === 0) return '0';
  if (!Number.isFinite(x)) return x > 0 ? 'inf' : '-inf';
  if (Number.isInteger(x)) return String(x);
  const abs = Math.abs(x);
  return abs >= 1e-3 && abs < 1e5 ? String(Number(x.toPrecision(digits))) : x.toExponential(digits - 1).replace(/\.?0+e/, 'e');
}

function pair(v: BeforeAfter): [string, string] {
  return [cell(v.before), cell(v.after)];
}

/** The before/after table, one block of rows per document with a discrete schedule. */
export function formatRunNumbers(plan: RunPlan): string {
  const lines: string[] = [];
  for (const row of plan.numbers) {
    lines.push(`${row.path}${row.documentIndex > 0 ? ` (document ${row.documentIndex + 1})` : ''}:`);
    const rows: [string, [string, string]][] = [
      ['terminal SNR (SNR_T)', pair(row.terminalSnr)],
      ['signal amplitude at the last step sqrt(abar_T)', pair(row.terminalSignal)],
      ['first sampled timestep', pair(row.firstTimestep)],
      ['SNR at the first sampled timestep', pair(row.snrAtFirst)],
      ['guidance rescale', pair(row.guidanceRescale)],
    ];
    if (row.firstSigma) rows.push(['sigma at the first sampled timestep', pair(row.firstSigma)]);
    const w0 = Math.max(...rows.map((r) => r[0].length));
    const w1 = Math.max('before'.length, ...rows.map((r) => r[1][0].length));
    lines.push(`  ${''.padEnd(w0)}  ${'before'.padEnd(w1)}  after`);
    for (const [label, [b, a]] of rows) lines.push(`  ${label.padEnd(w0)}  ${b.padEnd(w1)}  ${a}`);
  }
  return lines.length ? `${lines.join('\n')}\n` : '';
}
