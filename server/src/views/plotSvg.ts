/**
 * The schedule plot as one standalone SVG file (`noiselint explain --plot-svg`), drawn from the
 * same plot data the language server serves (plotData.ts), with no browser. Per diffusion
 * document, two panels over t: log-SNR and signal amplitude sqrt(abar), the current schedule
 * (solid) and its zero-terminal-SNR rescale (dashed), the sampled timesteps as marks, a shaded
 * band over the training steps the sampler never visits, and a zoomed inset of the amplitude
 * tail, where a terminal leak of a few hundredths is visible.
 *
 * Deterministic: the same data gives the same bytes (fixed layout, numbers at fixed precision).
 * Elements carry classes and data attributes (`data-t`, the panels' domains) so that tests and
 * other tools can read positions back.
 */
import type { PlotCurve, PlotData, PlotDocument, PlotSampledStep, PlotTailWindow } from '../base/protocol';
import { shortNumber } from './displayNumber';

export const SVG_WIDTH = 880;
const LEFT = 78;
const RIGHT = 24;
const PANEL_HEIGHT = 230;
const HEADER = 96;
const GAP = 58;
const FOOTER = 64;
export const DOCUMENT_HEIGHT = HEADER + PANEL_HEIGHT + GAP + PANEL_HEIGHT + FOOTER;

const COLOURS = {
  background: '#ffffff',
  text: '#1f2328',
  muted: '#59636e',
  grid: '#d8dee4',
  frame: '#8c959f',
  current: '#0969da',
  rescaled: '#bf8700',
  sampled: '#cf222e',
  outOfRange: '#8250df',
  band: '#cf222e',
};
const FONT = 'font-family="DejaVu Sans, Helvetica, Arial, sans-serif"';

/** A rectangle of the picture and the data range it shows. */
export interface PanelBox {
  left: number;
  top: number;
  width: number;
  height: number;
  xMin: number;
  xMax: number;
  yMin: number;
  yMax: number;
}

export function xPixel(box: PanelBox, x: number): number {
  return box.left + ((x - box.xMin) / (box.xMax - box.xMin || 1)) * box.width;
}

export function yPixel(box: PanelBox, y: number): number {
  return box.top + box.height - ((y - box.yMin) / (box.yMax - box.yMin || 1)) * box.height;
}

/** Fixed-precision coordinate text: 2 decimals, no trailing zeros. */
function n(x: number): string {
  const s = x.toFixed(2);
  return s.includes('.') ? s.replace(/\.?0+$/, '') : s;
}

function esc(s: string): string {
  return s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');
}

/** Round tick values covering [min, max]: steps of 1, 2 or 5 times a power of ten. */
export function niceTicks(min: number, max: number, count = 5): number[] {
  if (!(max > min)) return [min];
  const raw = (max - min) / count;
  const p = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 2.5, 5, 10].map((m) => m * p).find((s) => s >= raw * (1 - 1e-9)) ?? 10 * p;
  const out: number[] = [];
  for (let v = Math.ceil(min / step - 1e-9) * step; v <= max + step * 1e-9; v += step) out.push(Number(v.toPrecision(12)));
  return out;
}

function tickLabel(v: number): string {
  if (v === 0) return '0';
  const abs = Math.abs(v);
  if (abs >= 1e4 || abs < 1e-3) return shortNumber(v);
  return String(Number(v.toPrecision(6)));
}

/** Polylines through the finite points inside the x window (a null or non-finite value breaks the line). */
function polylines(
  box: PanelBox,
  t: readonly number[],
  values: readonly (number | null)[],
  from: number,
  cls: string,
  colour: string,
  dashed: boolean,
  width: number,
): string[] {
  const out: string[] = [];
  let run: string[] = [];
  const flush = () => {
    if (run.length > 1) {
      out.push(
        `<polyline class="curve ${cls}" fill="none" stroke="${colour}" stroke-width="${width}"${dashed ? ' stroke-dasharray="7 4"' : ''} stroke-linejoin="round" points="${run.join(' ')}"/>`,
      );
    }
    run = [];
  };
  for (let i = 0; i < t.length; i++) {
    const v = values[i];
    if (t[i]! < from || typeof v !== 'number' || !Number.isFinite(v)) {
      flush();
      continue;
    }
    run.push(`${n(xPixel(box, t[i]!))},${n(yPixel(box, Math.min(box.yMax, Math.max(box.yMin, v))))}`);
  }
  flush();
  return out;
}

function frameAndGrid(box: PanelBox, xTicks: number[], yTicks: number[], labels: boolean): string[] {
  const out: string[] = [];
  const bottom = box.top + box.height;
  for (const y of yTicks) {
    const py = n(yPixel(box, y));
    out.push(
      `<line class="grid" x1="${n(box.left)}" y1="${py}" x2="${n(box.left + box.width)}" y2="${py}" stroke="${COLOURS.grid}" stroke-width="1"/>`,
    );
    out.push(
      `<text x="${n(box.left - 6)}" y="${py}" dy="0.32em" text-anchor="end" font-size="${labels ? 11 : 9.5}" fill="${COLOURS.muted}" ${FONT}>${esc(tickLabel(y))}</text>`,
    );
  }
  for (const x of xTicks) {
    const px = n(xPixel(box, x));
    out.push(`<line class="grid" x1="${px}" y1="${n(box.top)}" x2="${px}" y2="${n(bottom)}" stroke="${COLOURS.grid}" stroke-width="1"/>`);
    out.push(
      `<text x="${px}" y="${n(bottom + (labels ? 16 : 13))}" text-anchor="middle" font-size="${labels ? 11 : 9.5}" fill="${COLOURS.muted}" ${FONT}>${esc(tickLabel(x))}</text>`,
    );
  }
  out.push(
    `<rect class="frame" x="${n(box.left)}" y="${n(box.top)}" width="${n(box.width)}" height="${n(box.height)}" fill="none" stroke="${COLOURS.frame}" stroke-width="1"/>`,
  );
  return out;
}

function bandRect(box: PanelBox, doc: PlotDocument): string[] {
  const s = doc.skipped;
  if (!s) return [];
  const x0 = xPixel(box, Math.max(box.xMin, s.lastVisited));
  const x1 = xPixel(box, Math.min(box.xMax, s.lastStep));
  if (!(x1 > x0)) return [];
  return [
    `<rect class="skipped" data-from="${s.lastVisited + 1}" data-to="${s.lastStep}" x="${n(x0)}" y="${n(box.top)}" width="${n(x1 - x0)}" height="${n(box.height)}" fill="${COLOURS.band}" fill-opacity="0.13"/>`,
  ];
}

function markers(box: PanelBox, steps: readonly PlotSampledStep[], pick: (s: PlotSampledStep) => number | null, from: number, r: number): string[] {
  const out: string[] = [];
  for (const step of steps) {
    if (step.t < from || step.t > box.xMax) continue;
    const x = xPixel(box, step.t);
    if (step.outOfRange) {
      const y = box.top + box.height;
      out.push(
        `<path class="sampled out-of-range" data-t="${step.t}" d="M${n(x - r)},${n(y - r)}L${n(x + r)},${n(y + r)}M${n(x - r)},${n(y + r)}L${n(x + r)},${n(y - r)}" stroke="${COLOURS.outOfRange}" stroke-width="2"/>`,
      );
      continue;
    }
    const v = pick(step);
    if (typeof v === 'number' && Number.isFinite(v)) {
      const y = yPixel(box, Math.min(box.yMax, Math.max(box.yMin, v)));
      out.push(
        `<circle class="sampled" data-t="${step.t}" cx="${n(x)}" cy="${n(y)}" r="${r}" fill="${COLOURS.sampled}" stroke="${COLOURS.background}" stroke-width="0.8"/>`,
      );
    } else {
      // Zero SNR: log-SNR is -Infinity; a triangle on the panel floor.
      const y = box.top + box.height;
      out.push(
        `<path class="sampled at-zero-snr" data-t="${step.t}" d="M${n(x)},${n(y - 2 * r)}L${n(x - r)},${n(y)}L${n(x + r)},${n(y)}Z" fill="${COLOURS.sampled}"/>`,
      );
    }
  }
  return out;
}

function finiteRange(lists: readonly (readonly (number | null)[])[]): [number, number] | null {
  let low = Infinity;
  let high = -Infinity;
  for (const list of lists) {
    for (const v of list) {
      if (typeof v === 'number' && Number.isFinite(v)) {
        if (v < low) low = v;
        if (v > high) high = v;
      }
    }
  }
  return low <= high ? [low, high] : null;
}

function curveSet(box: PanelBox, doc: PlotDocument, pick: (c: PlotCurve) => (number | null)[], from: number, width: number): string[] {
  const out = polylines(box, doc.t, pick(doc.current), from, 'current', COLOURS.current, false, width);
  if (doc.rescaled) out.push(...polylines(box, doc.t, pick(doc.rescaled), from, 'rescaled', COLOURS.rescaled, true, width));
  return out;
}

function panelGroup(name: string, box: PanelBox, body: string[]): string {
  return [
    `<g class="panel" data-panel="${name}" data-x-min="${box.xMin}" data-x-max="${box.xMax}" data-y-min="${box.yMin}" data-y-max="${box.yMax}">`,
    ...body,
    '</g>',
  ].join('\n');
}

function xDomain(doc: PlotDocument): [number, number] {
  const first = doc.t.length > 0 ? doc.t[0] : 0;
  const last = doc.t.length > 0 ? doc.t[doc.t.length - 1] : doc.trainSteps - 1;
  let max = Math.max(last!, doc.trainSteps - 1);
  for (const s of doc.sampled) if (Number.isFinite(s.t) && s.t > max) max = s.t;
  return [Math.min(0, first!), max];
}

function logSnrPanel(doc: PlotDocument, top: number): { svg: string; box: PanelBox } {
  const [xMin, xMax] = xDomain(doc);
  const range = finiteRange([doc.current.logSnr, doc.rescaled?.logSnr ?? [], doc.sampled.map((s) => s.logSnr)]) ?? [-1, 1];
  const pad = Math.max(0.5, (range[1] - range[0]) * 0.06);
  const yTicks = niceTicks(range[0] - pad, range[1] + pad, 6);
  const box: PanelBox = {
    left: LEFT,
    top,
    width: SVG_WIDTH - LEFT - RIGHT,
    height: PANEL_HEIGHT,
    xMin,
    xMax,
    yMin: Math.min(yTicks[0]!, range[0] - pad),
    yMax: Math.max(yTicks[yTicks.length - 1]!, range[1] + pad),
  };
  const body = [
    ...bandRect(box, doc),
    ...frameAndGrid(box, niceTicks(xMin, xMax, 8), yTicks, true),
    ...curveSet(box, doc, (c) => c.logSnr, -Infinity, 2),
    ...markers(box, doc.sampled, (s) => s.logSnr, -Infinity, 3.5),
    `<text x="${n(LEFT - 56)}" y="${n(top + PANEL_HEIGHT / 2)}" transform="rotate(-90 ${n(LEFT - 56)} ${n(top + PANEL_HEIGHT / 2)})" text-anchor="middle" font-size="12" fill="${COLOURS.text}" ${FONT}>log-SNR (natural log)</text>`,
  ];
  if (doc.current.logSnr.length > 0 && doc.current.logSnr[doc.current.logSnr.length - 1] === null) {
    body.push(
      `<text x="${n(box.left + box.width - 6)}" y="${n(top + PANEL_HEIGHT - 8)}" text-anchor="end" font-size="10.5" fill="${COLOURS.muted}" ${FONT}>zero SNR at the last step: log-SNR is −∞ there</text>`,
    );
  }
  return { svg: panelGroup('log-snr', box, body), box };
}

function insetBox(outer: PanelBox, tail: PlotTailWindow): PanelBox {
  const width = Math.round(outer.width * 0.36);
  const height = Math.round(outer.height * 0.38);
  return {
    left: outer.left + outer.width - width - 14,
    top: outer.top + 24,
    width,
    height,
    xMin: tail.from,
    xMax: Math.max(tail.to, outer.xMax),
    yMin: 0,
    yMax: tail.signalMax,
  };
}

function signalPanel(doc: PlotDocument, top: number): { svg: string; box: PanelBox; inset: PanelBox | null } {
  const [xMin, xMax] = xDomain(doc);
  const box: PanelBox = { left: LEFT, top, width: SVG_WIDTH - LEFT - RIGHT, height: PANEL_HEIGHT, xMin, xMax, yMin: 0, yMax: 1 };
  const body = [
    ...bandRect(box, doc),
    ...frameAndGrid(box, niceTicks(xMin, xMax, 8), niceTicks(0, 1, 5), true),
    ...curveSet(box, doc, (c) => c.signal, -Infinity, 2),
    ...markers(box, doc.sampled, (s) => s.signal, -Infinity, 3.5),
    `<text x="${n(LEFT - 56)}" y="${n(top + PANEL_HEIGHT / 2)}" transform="rotate(-90 ${n(LEFT - 56)} ${n(top + PANEL_HEIGHT / 2)})" text-anchor="middle" font-size="12" fill="${COLOURS.text}" ${FONT}>signal amplitude √ᾱ</text>`,
  ];
  let inset: PanelBox | null = null;
  const tail = doc.tail;
  if (doc.t.length >= 10 && tail.signalMax < 1 && tail.to > tail.from) {
    inset = insetBox(box, tail);
    // The zoomed region on the main panel, and the inset with its own axes.
    const zx = xPixel(box, tail.from);
    const zy = yPixel(box, tail.signalMax);
    body.push(
      `<rect x="${n(inset.left - 34)}" y="${n(inset.top - 20)}" width="${n(inset.width + 42)}" height="${n(inset.height + 36)}" fill="${COLOURS.background}" stroke="none"/>`,
      `<rect class="zoom-region" x="${n(zx)}" y="${n(zy)}" width="${n(box.left + box.width - zx)}" height="${n(box.top + box.height - zy)}" fill="none" stroke="${COLOURS.muted}" stroke-width="1" stroke-dasharray="3 3"/>`,
      `<line class="zoom-link" x1="${n(zx)}" y1="${n(zy)}" x2="${n(inset.left)}" y2="${n(inset.top + inset.height)}" stroke="${COLOURS.muted}" stroke-width="0.8" stroke-dasharray="3 3"/>`,
    );
    const insetBody = [
      ...bandRect(inset, doc),
      ...frameAndGrid(inset, niceTicks(inset.xMin, inset.xMax, 4), niceTicks(0, tail.signalMax, 4), false),
      ...curveSet(inset, doc, (c) => c.signal, tail.from, 1.8),
      ...markers(inset, doc.sampled, (s) => s.signal, tail.from, 3),
      `<text x="${n(inset.left)}" y="${n(inset.top - 8)}" font-size="11" fill="${COLOURS.text}" ${FONT}>tail, t ≥ ${esc(tickLabel(tail.from))} (zoomed: 0 to ${esc(tickLabel(tail.signalMax))})</text>`,
    ];
    if (doc.terminalSignal > 0) {
      const lastX = doc.t[doc.t.length - 1]!;
      const px = xPixel(inset, lastX);
      const py = yPixel(inset, Math.min(inset.yMax, doc.terminalSignal));
      // Above the curves, in the empty top of the window, with a leader down to the last point.
      const ly = inset.top + 14;
      insetBody.push(
        `<circle class="leak-point" cx="${n(px)}" cy="${n(py)}" r="3.5" fill="none" stroke="${COLOURS.current}" stroke-width="1.5"/>`,
        `<text class="leak-label" x="${n(px - 6)}" y="${n(ly)}" text-anchor="end" font-size="10.5" font-weight="bold" fill="${COLOURS.current}" ${FONT}>${esc(`√ᾱ at t = ${tickLabel(lastX)}: ${shortNumber(doc.terminalSignal)}`)}</text>`,
      );
    }
    body.push(panelGroup('signal-tail', inset, insetBody));
  }
  return { svg: panelGroup('signal', box, body), box, inset };
}

function legend(doc: PlotDocument, y: number): string {
  const items: string[] = [];
  let x = LEFT;
  const add = (symbol: string, label: string) => {
    items.push(symbol.replace(/@X/g, n(x)).replace(/@Y/g, n(y)));
    items.push(`<text x="${n(x + 30)}" y="${n(y)}" dy="0.32em" font-size="11.5" fill="${COLOURS.text}" ${FONT}>${esc(label)}</text>`);
    x += 42 + label.length * 6.4;
  };
  add(`<line x1="@X" y1="@Y" x2="${n(x + 24)}" y2="@Y" stroke="${COLOURS.current}" stroke-width="2"/>`, 'current schedule');
  if (doc.rescaled)
    add(
      `<line x1="@X" y1="@Y" x2="${n(x + 24)}" y2="@Y" stroke="${COLOURS.rescaled}" stroke-width="2" stroke-dasharray="7 4"/>`,
      'rescaled to zero terminal SNR (Lin et al. 2023)',
    );
  if (doc.sampled.length > 0) add(`<circle cx="${n(x + 12)}" cy="@Y" r="3.5" fill="${COLOURS.sampled}"/>`, 'sampled timesteps');
  if (doc.skipped) add(`<rect x="@X" y="${n(y - 6)}" width="24" height="12" fill="${COLOURS.band}" fill-opacity="0.13"/>`, 'never sampled');
  return `<g class="legend">\n${items.join('\n')}\n</g>`;
}

/** Title (the file), the schedule with its last-step numbers, the sampler: three short lines. */
function headerLines(doc: PlotDocument, fileName: string): [string, string, string] {
  const title = `${fileName}${doc.index > 0 ? ` (document ${doc.index + 1})` : ''}`;
  const schedule = `${doc.label}; at the last step √ᾱ = ${shortNumber(doc.terminalSignal)}, SNR ${shortNumber(doc.terminalSnr)}`;
  const first = doc.sampled[0];
  let sampler = 'no sampling steps in this file';
  if (first) {
    sampler = `the sampler visits ${doc.sampled.length} step${doc.sampled.length === 1 ? '' : 's'} from t = ${first.t}`;
    if (doc.skipped)
      sampler += `, never t = ${doc.skipped.lastVisited + 1}..${doc.skipped.lastStep} (${doc.skipped.count} step${doc.skipped.count === 1 ? '' : 's'})`;
  }
  return [title, schedule, sampler];
}

function documentSvg(doc: PlotDocument, fileName: string, top: number): string {
  const [title, schedule, sampler] = headerLines(doc, fileName);
  const log = logSnrPanel(doc, top + HEADER);
  const signal = signalPanel(doc, top + HEADER + PANEL_HEIGHT + GAP);
  const xLabel = doc.family === 'discrete' ? 't (training timestep, 0 = clean)' : 't';
  const xLabelAt = (panelTop: number) =>
    `<text x="${n(LEFT + (SVG_WIDTH - LEFT - RIGHT) / 2)}" y="${n(panelTop + PANEL_HEIGHT + 34)}" text-anchor="middle" font-size="11.5" fill="${COLOURS.muted}" ${FONT}>${xLabel}</text>`;
  const parts = [
    `<g class="document" data-index="${doc.index}">`,
    `<text class="title" x="${LEFT}" y="${n(top + 26)}" font-size="16" font-weight="bold" fill="${COLOURS.text}" ${FONT}>${esc(title)}</text>`,
    `<text class="subtitle" x="${LEFT}" y="${n(top + 48)}" font-size="12.5" fill="${COLOURS.text}" ${FONT}>${esc(schedule)}</text>`,
    `<text class="subtitle" x="${LEFT}" y="${n(top + 67)}" font-size="12.5" fill="${COLOURS.muted}" ${FONT}>${esc(sampler)}</text>`,
    log.svg,
    xLabelAt(top + HEADER),
    signal.svg,
    xLabelAt(top + HEADER + PANEL_HEIGHT + GAP),
    legend(doc, top + HEADER + 2 * PANEL_HEIGHT + GAP + 52),
  ];
  doc.problems
    .slice(0, 1)
    .forEach((problem) => parts.push(`<text x="${LEFT}" y="${n(top + 85)}" font-size="11" fill="${COLOURS.sampled}" ${FONT}>${esc(problem)}</text>`));
  parts.push('</g>');
  return parts.join('\n');
}

/**
 * The whole picture: one block per diffusion document of the file, stacked. A file without a
 * computable schedule gives a small picture that says so.
 */
export function plotSvg(data: PlotData, fileName: string): string {
  const docs = data.documents;
  const height = docs.length === 0 ? 80 : docs.length * DOCUMENT_HEIGHT;
  const body =
    docs.length === 0
      ? [`<text x="${LEFT}" y="44" font-size="14" fill="${COLOURS.text}" ${FONT}>${esc(`${fileName}: no noise schedule to plot`)}</text>`]
      : docs.map((doc, i) => documentSvg(doc, fileName, i * DOCUMENT_HEIGHT));
  return [
    '<?xml version="1.0" encoding="UTF-8"?>',
    `<svg xmlns="http://www.w3.org/2000/svg" width="${SVG_WIDTH}" height="${height}" viewBox="0 0 ${SVG_WIDTH} ${height}">`,
    `<title>${esc(`Noise schedule of ${fileName}`)}</title>`,
    `<rect width="${SVG_WIDTH}" height="${height}" fill="${COLOURS.background}"/>`,
    ...body,
    '</svg>',
    '',
  ].join('\n');
}
