/**
 * A tiny SVG line chart of log-SNR over t (current schedule solid, rescaled dashed), for hovers.
 * Plain string out; zero SNR (-Infinity) is drawn down to the bottom edge.
 */
export interface SparklineOptions {
  width?: number;
  height?: number;
  /** Most points drawn per curve. */
  maxPoints?: number;
}

const CURRENT_COLOUR = '#e8912d';
const RESCALED_COLOUR = '#4a9fe0';
const AXIS_COLOUR = '#888888';

function thin(values: ArrayLike<number>, max: number): { x: number; y: number }[] {
  const n = values.length;
  const out: { x: number; y: number }[] = [];
  if (n === 0) return out;
  const count = Math.min(n, max);
  for (let k = 0; k < count; k++) {
    const i = count === 1 ? 0 : Math.round((k * (n - 1)) / (count - 1));
    out.push({ x: n === 1 ? 0 : i / (n - 1), y: values[i]! });
  }
  return out;
}

export function logSnrSparkline(current: ArrayLike<number>, rescaled: ArrayLike<number> | null, options: SparklineOptions = {}): string {
  const width = options.width ?? 240;
  const height = options.height ?? 80;
  const maxPoints = options.maxPoints ?? 120;
  const pad = 4;
  const curves = [thin(current, maxPoints), rescaled ? thin(rescaled, maxPoints) : []];
  let lo = Infinity;
  let hi = -Infinity;
  for (const curve of curves) {
    for (const p of curve) {
      if (!Number.isFinite(p.y)) continue;
      lo = Math.min(lo, p.y);
      hi = Math.max(hi, p.y);
    }
  }
  if (!Number.isFinite(lo)) {
    lo = -1;
    hi = 1;
  }
  if (hi - lo < 1e-9) {
    lo -= 1;
    hi += 1;
  }
  const px = (x: number) => (pad + x * (width - 2 * pad)).toFixed(1);
  const py = (y: number) => {
    if (y === -Infinity || Number.isNaN(y)) return (height - pad).toFixed(1);
    if (y === Infinity) return pad.toFixed(1);
    return (pad + ((hi - y) / (hi - lo)) * (height - 2 * pad)).toFixed(1);
  };
  const parts: string[] = [];
  parts.push(`<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${height}" viewBox="0 0 ${width} ${height}">`);
  parts.push(`<rect x="0.5" y="0.5" width="${width - 1}" height="${height - 1}" fill="none" stroke="${AXIS_COLOUR}" stroke-opacity="0.4"/>`);
  if (lo < 0 && hi > 0) {
    const y0 = py(0);
    parts.push(`<line x1="${pad}" y1="${y0}" x2="${width - pad}" y2="${y0}" stroke="${AXIS_COLOUR}" stroke-opacity="0.5" stroke-dasharray="2 3"/>`);
  }
  const polyline = (curve: { x: number; y: number }[], colour: string, dashed: boolean) =>
    `<polyline fill="none" stroke="${colour}" stroke-width="1.6"${dashed ? ' stroke-dasharray="4 3"' : ''} points="${curve
      .map((p) => `${px(p.x)},${py(p.y)}`)
      .join(' ')}"/>`;
  if (curves[1]!.length > 0) parts.push(polyline(curves[1]!, RESCALED_COLOUR, true));
  parts.push(polyline(curves[0]!, CURRENT_COLOUR, false));
  parts.push('</svg>');
  return parts.join('');
}

/** The chart as a data URI usable in a markdown image. */
export function svgDataUri(svg: string): string {
  return `data:image/svg+xml;base64,${Buffer.from(svg, 'utf8').toString('base64')}`;
}
