// Number formatting shared by the status item and the plot view (no VS Code imports: the webview
// bundle uses it too).

/** SNR-like quantities: exact zero stays "0", small values go to exponent notation. */
export function formatNumber(value: number | null | undefined): string {
  if (value === null || value === undefined || Number.isNaN(value)) return 'n/a';
  if (value === 0) return '0';
  if (value === Infinity) return '∞';
  if (value === -Infinity) return '−∞';
  const magnitude = Math.abs(value);
  if (magnitude >= 0.01 && magnitude < 10000) return trimZeros(value.toPrecision(3));
  return value.toExponential(2);
}

function trimZeros(text: string): string {
  return text.includes('.') && !text.includes('e') ? text.replace(/\.?0+$/, '') : text;
}

export function plural(count: number, word: string): string {
  return `${count} ${word}${count === 1 ? '' : 's'}`;
}
