// Messages between the extension host and the plot webview.
import type { PlotData } from '../protocol';

export type ToWebview =
  | { type: 'loading'; fileName: string }
  | { type: 'plot'; fileName: string; data: PlotData | null }
  | { type: 'error'; fileName: string; message: string };

export type FromWebview = { type: 'ready' } | { type: 'showSource'; line?: number };
