/**
 * Inline numbers shown after fields: `SNR_T 4.7e-3` after the schedule field and
 * `starts at 901/999` after the spacing (or step count) field. Offsets and strings only.
 */
import type { FileReading } from '../engine/api';
import type { Concept } from '../fields/concepts';
import { shortNumber } from './displayNumber';

export interface InlineHint {
  /** Where the hint goes: the end of the field's value. */
  offset: number;
  label: string;
  tooltip: string;
  kind: 'schedule' | 'sampling';
}

const SCHEDULE_ANCHORS: readonly Concept[] = ['betaSchedule', 'betas', 'trainSteps', 'sigmaMax', 'flowShift'];
const SAMPLING_ANCHORS: readonly Concept[] = ['timestepSpacing', 'sampleSteps'];

/** Last path segment, for a short label (messages keep the whole path). */
function baseName(path: string): string {
  const parts = path.split(/[\\/]/);
  return parts[parts.length - 1] || path;
}

export function inlineHintsFor(file: FileReading): InlineHint[] {
  const hints: InlineHint[] = [];
  for (const doc of file.documents) {
    if (!doc.setup.isDiffusionConfig) continue;
    const { schedule, sampling } = doc.analysis;
    const from = doc.setup.inherited?.from;
    const origin = from ? ` (schedule from training file ${from})` : '';
    if (schedule) {
      // A file that takes its schedule from its training partner shows it after its first sampling field.
      const anchor =
        SCHEDULE_ANCHORS.map((c) => doc.setup.fields[c]?.source).find((s) => !!s) ??
        (from ? SAMPLING_ANCHORS.map((c) => doc.setup.fields[c]?.source).find((s) => !!s) : undefined);
      if (anchor) {
        hints.push({
          offset: anchor.valueSpan.end,
          label: `SNR_T ${shortNumber(schedule.terminalSnr, 2)}${from ? ` from ${baseName(from)}` : ''}`,
          tooltip: `Terminal SNR ${shortNumber(schedule.terminalSnr, 4)}; signal at the last step ${shortNumber(schedule.terminalSignal, 4)}${origin}`,
          kind: 'schedule',
        });
      }
    }
    if (schedule && sampling) {
      const anchor = SAMPLING_ANCHORS.map((c) => doc.setup.fields[c]?.source).find((s) => !!s);
      if (anchor) {
        hints.push({
          offset: anchor.valueSpan.end,
          label: `starts at ${sampling.firstTimestep}/${schedule.trainSteps - 1}`,
          tooltip:
            `First sampling timestep ${sampling.firstTimestep} of ${schedule.trainSteps - 1}` +
            `${sampling.stepsAssumed ? ` (assuming ${sampling.steps} steps)` : ''}; SNR there ${shortNumber(sampling.snrAtFirst, 3)}${origin}`,
          kind: 'sampling',
        });
      }
    }
  }
  return hints.sort((a, b) => a.offset - b.offset);
}
