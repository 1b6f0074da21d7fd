// Number formatting shared by the status item and the plot view (no VS Code imports: the webview
// bundle uses it too). The spelling itself is the server's one number formatter.
import { fmtDigits } from '@noiselint/server/src/base/numbers';

/** SNR-like quantities: exact zero stays "0", small values go to exponent notation; no value is "n/a". */
export function formatNumber(value: number | null | undefined): string {
  if (value === null || value === undefined) return 'n/a';
  return fmtDigits(value, 3, 0.01, 10000);
}

export function plural(count: number, word: string): string {
  return `${count} ${word}${count === 1 ? '' : 's'}`;
}
