// Runs inside the plot webview. Draws log-SNR and signal amplitude over t for the current schedule
// and its zero-terminal-SNR rescale (Lin et al. 2023), with the sampler's timesteps as points.
// Bundled with chart.js into media/plot.js; loads nothing from the network.
import {
  Chart,
  Legend,
  LinearScale,
  LineController,
  LineElement,
  PointElement,
  ScatterController,
  Tooltip,
  type Plugin,
  type ChartConfiguration,
  type ChartDataset,
  type TooltipItem,
} from 'chart.js';
import { formatNumber, plural } from '../format';
import type { PlotCurve, PlotData, PlotDocument, PlotSampledStep } from '../protocol';
import type { FromWebview, ToWebview } from './messages';

Chart.register(LineController, ScatterController, LineElement, PointElement, LinearScale, Tooltip, Legend);

interface VsCodeApi {
  postMessage(message: FromWebview): void;
  getState(): unknown;
  setState(state: unknown): void;
}
declare function acquireVsCodeApi(): VsCodeApi;

const vscode = acquireVsCodeApi();

interface SavedState {
  documentIndex: number;
}

/** A point of a chart; `step` is set on sampled-timestep points (for the tooltip). */
interface PlotPoint {
  x: number;
  y: number | null;
  step?: PlotSampledStep;
  /** The true value is -Infinity; the point sits on the axis floor. */
  floor?: boolean;
}

const element = <T extends HTMLElement>(id: string) => document.getElementById(id) as T;
const titleEl = element<HTMLHeadingElement>('plot-title');
const summaryEl = element<HTMLParagraphElement>('plot-summary');
const problemsEl = element<HTMLUListElement>('plot-problems');
const noteEl = element<HTMLParagraphElement>('plot-note');
const pickerEl = element<HTMLLabelElement>('doc-picker');
const selectEl = element<HTMLSelectElement>('doc-select');
const statusEl = element<HTMLDivElement>('plot-status');
const logSnrCanvas = element<HTMLCanvasElement>('chart-logsnr');
const signalCanvas = element<HTMLCanvasElement>('chart-signal');
const tailCanvas = element<HTMLCanvasElement>('chart-tail');

let data: PlotData | null = null;
let fileName = '';
let documentIndex = (vscode.getState() as SavedState | undefined)?.documentIndex ?? 0;
let logSnrChart: Chart | undefined;
let signalChart: Chart | undefined;
let tailChart: Chart | undefined;

/**
 * Shades the training steps the sampler never visits (the plot data's `skipped` range: above the
 * highest sampled step up to T - 1), behind the curves.
 */
function skippedBand(doc: PlotDocument, colour: string): Plugin<'line' | 'scatter'> {
  return {
    id: 'noiselintSkippedBand',
    beforeDatasetsDraw(chart) {
      const s = doc.skipped;
      const x = chart.scales.x;
      if (!s || !x) return;
      const { top, bottom, left, right } = chart.chartArea;
      const x0 = Math.max(left, x.getPixelForValue(s.lastVisited));
      const x1 = Math.min(right, x.getPixelForValue(s.lastStep));
      if (!(x1 > x0)) return;
      const ctx = chart.ctx;
      ctx.save();
      ctx.globalAlpha = 0.16;
      ctx.fillStyle = colour;
      ctx.fillRect(x0, top, x1 - x0, bottom - top);
      ctx.restore();
    },
  };
}

interface Palette {
  foreground: string;
  muted: string;
  grid: string;
  current: string;
  rescaled: string;
  sampled: string;
  outOfRange: string;
  background: string;
  font: string;
}

function cssVar(name: string, fallback: string): string {
  const value = getComputedStyle(document.documentElement).getPropertyValue(name).trim();
  return value || fallback;
}

function palette(): Palette {
  return {
    foreground: cssVar('--vscode-editor-foreground', '#cccccc'),
    muted: cssVar('--vscode-descriptionForeground', '#999999'),
    grid: cssVar('--vscode-editorWidget-border', cssVar('--vscode-panel-border', 'rgba(128,128,128,0.35)')),
    current: cssVar('--vscode-charts-blue', '#3794ff'),
    rescaled: cssVar('--vscode-charts-yellow', '#cca700'),
    sampled: cssVar('--vscode-charts-red', '#f14c4c'),
    outOfRange: cssVar('--vscode-charts-purple', '#b180d7'),
    background: cssVar('--vscode-editor-background', '#1e1e1e'),
    font: cssVar('--vscode-font-family', 'sans-serif'),
  };
}

function curvePoints(t: number[], values: (number | null)[]): PlotPoint[] {
  const points: PlotPoint[] = [];
  for (let i = 0; i < t.length; i++) {
    const y = values[i];
    points.push({ x: t[i]!, y: typeof y === 'number' && Number.isFinite(y) ? y : null });
  }
  return points;
}

function finiteRange(values: (number | null)[][]): [number, number] | null {
  let low = Infinity;
  let high = -Infinity;
  for (const list of values) {
    for (const v of list) {
      if (typeof v === 'number' && Number.isFinite(v)) {
        if (v < low) low = v;
        if (v > high) high = v;
      }
    }
  }
  return low <= high ? [low, high] : null;
}

function sampledPoints(steps: PlotSampledStep[], pick: (s: PlotSampledStep) => number | null, floor: number): PlotPoint[] {
  return steps.map((step) => {
    const y = pick(step);
    const finite = typeof y === 'number' && Number.isFinite(y);
    return { x: step.t, y: finite ? y : floor, step, floor: !finite };
  });
}

function describeStep(step: PlotSampledStep, total: number): string[] {
  const lines = [`step ${step.order + 1} of ${total}: t = ${step.t}`];
  lines.push(`SNR ${formatNumber(step.snr)}, log-SNR ${step.logSnr === null ? (step.snr === 0 ? '−∞' : 'n/a') : formatNumber(step.logSnr)}`);
  lines.push(`signal √ᾱ ${formatNumber(step.signal)}`);
  if (step.outOfRange) lines.push('outside the training range [0, T − 1]');
  return lines;
}

function lineDataset(label: string, points: PlotPoint[], color: string, dashed: boolean): ChartDataset<'line', PlotPoint[]> {
  return {
    type: 'line',
    label,
    data: points,
    borderColor: color,
    backgroundColor: color,
    borderWidth: dashed ? 2.5 : 2,
    borderDash: dashed ? [7, 4] : [],
    pointRadius: 0,
    pointHitRadius: 4,
    pointStyle: 'line',
    spanGaps: false,
    parsing: false,
    order: 2,
  };
}

function sampledDataset(points: PlotPoint[], colors: Palette): ChartDataset<'scatter', PlotPoint[]> {
  return {
    type: 'scatter',
    label: 'sampled timesteps',
    data: points,
    parsing: false,
    order: 1,
    // Points on the axis floor or at t = T - 1 stay whole instead of being cut at the chart edge.
    clip: false,
    pointRadius: 4.5,
    pointHoverRadius: 7,
    pointStyle: points.map((p) => (p.step?.outOfRange ? 'crossRot' : p.floor ? 'triangle' : 'circle')),
    borderColor: points.map((p) => (p.step?.outOfRange ? colors.outOfRange : colors.sampled)),
    backgroundColor: points.map((p) => (p.step?.outOfRange ? colors.outOfRange : colors.sampled)),
  };
}

function chartConfig(
  doc: PlotDocument,
  datasets: ChartDataset<'line' | 'scatter', PlotPoint[]>[],
  yTitle: string,
  colors: Palette,
  yRange?: { min?: number; max?: number },
  xRange?: { min: number; max: number },
): ChartConfiguration<'line' | 'scatter', PlotPoint[]> {
  const lastT = doc.t.length > 0 ? doc.t[doc.t.length - 1] : doc.trainSteps - 1;
  return {
    type: 'line',
    data: { datasets },
    plugins: [skippedBand(doc, colors.sampled)],
    options: {
      animation: false,
      responsive: true,
      maintainAspectRatio: false,
      interaction: { mode: 'nearest', intersect: false, axis: 'x' },
      color: colors.foreground,
      font: { family: colors.font },
      scales: {
        x: {
          type: 'linear',
          min: xRange?.min ?? Math.min(0, doc.t[0] ?? 0),
          max: xRange?.max ?? Math.max(lastT!, ...doc.sampled.map((s) => s.t)),
          title: { display: true, text: doc.family === 'discrete' ? 't (training timestep, 0 = clean)' : 't', color: colors.muted },
          ticks: { color: colors.muted },
          grid: { color: colors.grid },
        },
        y: {
          type: 'linear',
          ...yRange,
          title: { display: true, text: yTitle, color: colors.muted },
          ticks: { color: colors.muted },
          grid: { color: colors.grid },
        },
      },
      plugins: {
        legend: {
          labels: {
            color: colors.foreground,
            usePointStyle: true,
            sort: (a, b) => (a.datasetIndex ?? 0) - (b.datasetIndex ?? 0),
            // Per-point styles would give the legend the first point's marker; show a plain dot.
            generateLabels: (chart) =>
              Chart.defaults.plugins.legend.labels
                .generateLabels(chart)
                .map((label) =>
                  label.pointStyle === 'line' ? label : { ...label, pointStyle: 'circle', fillStyle: colors.sampled, strokeStyle: colors.sampled },
                ),
          },
        },
        tooltip: {
          callbacks: {
            label(item: TooltipItem<'line' | 'scatter'>) {
              const point = item.raw as PlotPoint;
              if (point.step) return describeStep(point.step, doc.sampled.length);
              const y = point.y === null ? 'n/a' : formatNumber(point.y);
              return `${item.dataset.label ?? ''}: ${y} at t = ${point.x}`;
            },
          },
        },
      },
    },
  };
}

function currentDocument(): PlotDocument | undefined {
  if (!data || data.documents.length === 0) return undefined;
  if (documentIndex >= data.documents.length || documentIndex < 0) documentIndex = 0;
  return data.documents[documentIndex];
}

function niceFloor(value: number): number {
  const step = Math.abs(value) > 20 ? 10 : Math.abs(value) > 5 ? 5 : 1;
  return Math.floor(value / step) * step;
}

function hasZero(curve: PlotCurve | null): boolean {
  return !!curve && curve.logSnr.length > 0 && curve.logSnr[curve.logSnr.length - 1] === null;
}

function render(): void {
  const doc = currentDocument();
  const colors = palette();
  logSnrChart?.destroy();
  signalChart?.destroy();
  tailChart?.destroy();
  logSnrChart = undefined;
  signalChart = undefined;
  tailChart = undefined;
  problemsEl.replaceChildren();
  problemsEl.hidden = true;
  noteEl.textContent = '';
  titleEl.textContent = fileName ? `Noise schedule: ${fileName}` : 'Noise schedule';
  renderPicker();
  if (!doc) {
    document.body.classList.add('empty');
    summaryEl.textContent = data
      ? 'No noise schedule found in this file (noiselint plots diffusion training and sampling configs).'
      : 'No plot data for this file.';
    setStatus('empty', 0, 0);
    return;
  }
  document.body.classList.remove('empty');

  const first = doc.sampled[0];
  const parts = [`${doc.label}.`, `Terminal SNR ${formatNumber(doc.terminalSnr)}, signal at the last step √ᾱ = ${formatNumber(doc.terminalSignal)}.`];
  if (first) {
    parts.push(
      `The sampler visits ${plural(doc.sampled.length, 'step')}, starting at t = ${first.t}` +
        (first.t === doc.trainSteps - 1 ? ' (the last training step).' : ` (not the last training step, t = ${doc.trainSteps - 1}).`),
    );
  }
  if (doc.skipped) {
    parts.push(
      `Shaded: t = ${doc.skipped.lastVisited + 1} to ${doc.skipped.lastStep}, ${plural(doc.skipped.count, 'training step')} the sampler never visits.`,
    );
  }
  summaryEl.textContent = parts.join(' ');
  if (doc.problems.length > 0) {
    problemsEl.hidden = false;
    for (const problem of doc.problems) {
      const item = document.createElement('li');
      item.textContent = problem;
      problemsEl.append(item);
    }
  }

  const notes: string[] = [];
  if (hasZero(doc.current)) notes.push('The schedule reaches zero SNR at its last step: log-SNR is −∞ there and is not drawn.');
  if (doc.rescaled) notes.push('Dashed: the same schedule rescaled to zero terminal SNR (Lin et al. 2023); its last step has log-SNR −∞.');
  if (doc.sampled.some((s) => s.logSnr === null)) notes.push('Triangles on the floor of the log-SNR chart mark sampled steps at zero SNR.');
  noteEl.textContent = notes.join(' ');

  const logSnrRange = finiteRange([doc.current.logSnr, doc.rescaled?.logSnr ?? [], doc.sampled.map((s) => s.logSnr)]);
  // Zero-SNR sampled steps (log-SNR -Infinity) sit on a floor a little below the lowest finite
  // value, rounded so the axis keeps round tick labels.
  const floor = logSnrRange ? niceFloor(logSnrRange[0] - Math.max(1, (logSnrRange[1] - logSnrRange[0]) * 0.05)) : -1;

  const logSnrSets: ChartDataset<'line' | 'scatter', PlotPoint[]>[] = [
    lineDataset('current schedule', curvePoints(doc.t, doc.current.logSnr), colors.current, false),
  ];
  const signalSets: ChartDataset<'line' | 'scatter', PlotPoint[]>[] = [
    lineDataset('current schedule', curvePoints(doc.t, doc.current.signal), colors.current, false),
  ];
  if (doc.rescaled) {
    logSnrSets.push(lineDataset('zero terminal SNR rescale', curvePoints(doc.t, doc.rescaled.logSnr), colors.rescaled, true));
    signalSets.push(lineDataset('zero terminal SNR rescale', curvePoints(doc.t, doc.rescaled.signal), colors.rescaled, true));
  }
  if (doc.sampled.length > 0) {
    logSnrSets.push(
      sampledDataset(
        sampledPoints(doc.sampled, (s) => s.logSnr, floor),
        colors,
      ),
    );
    signalSets.push(
      sampledDataset(
        sampledPoints(doc.sampled, (s) => s.signal, 0),
        colors,
      ),
    );
  }
  logSnrChart = new Chart(
    logSnrCanvas,
    chartConfig(doc, logSnrSets, 'log-SNR (natural log)', colors, doc.sampled.some((s) => s.logSnr === null) ? { min: floor } : undefined),
  );
  signalChart = new Chart(signalCanvas, chartConfig(doc, signalSets, 'signal amplitude √ᾱ', colors, { min: 0, max: 1 }));

  // The noisy end, zoomed (the plot data's tail window): a leak of a few hundredths fills it.
  const tail = doc.tail;
  const inTail = (points: PlotPoint[]) => points.filter((p) => p.x >= tail.from);
  const tailSets: ChartDataset<'line' | 'scatter', PlotPoint[]>[] = [
    lineDataset('current schedule', inTail(curvePoints(doc.t, doc.current.signal)), colors.current, false),
  ];
  if (doc.rescaled) tailSets.push(lineDataset('zero terminal SNR rescale', inTail(curvePoints(doc.t, doc.rescaled.signal)), colors.rescaled, true));
  const tailSteps = doc.sampled.filter((s) => s.t >= tail.from);
  if (tailSteps.length > 0)
    tailSets.push(
      sampledDataset(
        sampledPoints(tailSteps, (s) => s.signal, 0),
        colors,
      ),
    );
  tailChart = new Chart(
    tailCanvas,
    chartConfig(
      doc,
      tailSets,
      `√ᾱ, t ≥ ${tail.from} (0 to ${formatNumber(tail.signalMax)})`,
      colors,
      { min: 0, max: tail.signalMax },
      { min: tail.from, max: Math.max(tail.to, ...tailSteps.map((s) => s.t)) },
    ),
  );

  const drawn = doc.current.signal.length;
  setStatus('ready', drawn, doc.sampled.length);
  // Which theme colour the charts were drawn with (lets a test see the redraw on a theme change).
  statusEl.dataset.foreground = colors.foreground;
  statusEl.dataset.skipped = doc.skipped ? `${doc.skipped.lastVisited + 1}-${doc.skipped.lastStep}` : '';
  statusEl.dataset.tailMax = String(tail.signalMax);
}

function renderPicker(): void {
  const docs = data?.documents ?? [];
  pickerEl.hidden = docs.length < 2;
  if (docs.length < 2) {
    selectEl.replaceChildren();
    return;
  }
  const options = docs.map((doc, i) => {
    const option = document.createElement('option');
    option.value = String(i);
    option.textContent = `${doc.index + 1}: ${doc.label}`;
    option.selected = i === documentIndex;
    return option;
  });
  selectEl.replaceChildren(...options);
}

function setStatus(state: string, points: number, sampled: number, message = ''): void {
  statusEl.dataset.state = state;
  statusEl.dataset.points = String(points);
  statusEl.dataset.sampled = String(sampled);
  statusEl.dataset.documents = String(data?.documents.length ?? 0);
  statusEl.dataset.documentIndex = String(documentIndex);
  statusEl.dataset.version = data?.version === null || data?.version === undefined ? '' : String(data.version);
  statusEl.textContent = message;
}

function showError(message: string): void {
  logSnrChart?.destroy();
  signalChart?.destroy();
  tailChart?.destroy();
  logSnrChart = undefined;
  signalChart = undefined;
  tailChart = undefined;
  document.body.classList.add('empty');
  summaryEl.textContent = `The plot could not be computed: ${message}`;
  setStatus('error', 0, 0, message);
}

selectEl.addEventListener('change', () => {
  documentIndex = Number(selectEl.value) || 0;
  vscode.setState({ documentIndex } satisfies SavedState);
  render();
});

window.addEventListener('message', (event: MessageEvent<ToWebview>) => {
  const message = event.data;
  if (!message || typeof message !== 'object') return;
  fileName = message.fileName;
  if (message.type === 'loading') {
    titleEl.textContent = `Noise schedule: ${fileName}`;
    summaryEl.textContent = 'Loading…';
    statusEl.dataset.state = 'loading';
  } else if (message.type === 'plot') {
    data = message.data;
    render();
  } else if (message.type === 'error') {
    showError(message.message);
  }
});

// Colour themes change the CSS variables on <html> and the class on <body>: redraw with new colours.
let themeTimer: ReturnType<typeof setTimeout> | undefined;
const themeObserver = new MutationObserver(() => {
  if (themeTimer) clearTimeout(themeTimer);
  themeTimer = setTimeout(() => {
    if (data && statusEl.dataset.state === 'ready') render();
  }, 50);
});
themeObserver.observe(document.documentElement, { attributes: true, attributeFilter: ['style', 'class'] });
themeObserver.observe(document.body, { attributes: true, attributeFilter: ['class'] });

vscode.postMessage({ type: 'ready' });
