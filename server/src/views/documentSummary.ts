/** The one-line status of a document (the `noiselint/summary` request). */
import type { FileResult } from '../engine/api';
import type { DocumentSummary } from '../base/protocol';

export function summaryFor(file: FileResult | null, uri: string): DocumentSummary {
  const first = file?.documents.find((d) => d.setup.isDiffusionConfig && d.analysis.schedule);
  const findings = file?.findings ?? [];
  const errors = findings.filter((f) => f.severity === 'error').length;
  const warnings = findings.filter((f) => f.severity === 'warning').length;
  const infos = findings.filter((f) => f.severity === 'info' || f.severity === 'hint').length;
  const isConfig = !!file?.isDiffusionConfig;
  return {
    uri,
    isDiffusionConfig: isConfig,
    terminalSnr: first?.analysis.schedule?.terminalSnr ?? null,
    terminalSignal: first?.analysis.schedule?.terminalSignal ?? null,
    errors,
    warnings,
    infos,
    state: !isConfig ? 'not-a-config' : errors > 0 ? 'errors' : warnings > 0 ? 'warnings' : 'clean',
  };
}
