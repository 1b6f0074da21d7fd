// The server's protocol extensions (plain data and method names), re-exported for the client.
export {
  EXPLAIN_REQUEST,
  FIX_ALL_KIND,
  PLOT_CHANGED_NOTIFICATION,
  PLOT_DATA_REQUEST,
  SHOW_SCHEDULE_COMMAND,
  SUMMARY_REQUEST,
  RUN_RESCALE_REQUEST,
} from '@noiselint/server/src/base/protocol';
export type {
  DocumentSummary,
  PlotCurve,
  PlotData,
  PlotDataParams,
  PlotDocument,
  PlotSampledStep,
  PlotSkippedRange,
  PlotTailWindow,
  UriParams,
  RunRescaleParams,
  RunRescaleResult,
} from '@noiselint/server/src/base/protocol';

/** Languages the extension checks. */
export const LANGUAGES = ['yaml', 'json', 'jsonc', 'toml'] as const;
