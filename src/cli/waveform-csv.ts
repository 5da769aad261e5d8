// Settled waveforms of all variants on their common time grid, one column per quantity.

import type { VariantRun } from '../simulation/run-variant.js';
import type { WaveformChannel } from '../simulation/recorder.js';

const COLUMNS: Array<{ channel: WaveformChannel; label: string; needs?: 'clamp' | 'damper' }> = [
  { channel: 'drainVoltage', label: 'drain voltage (V)' },
  { channel: 'primaryCurrent', label: 'primary current (A)' },
  { channel: 'secondaryCurrent', label: 'secondary current referred to primary (A)' },
  { channel: 'clampVoltage', label: 'clamp capacitor voltage above rail (V)', needs: 'clamp' },
  { channel: 'clampDiodeCurrent', label: 'clamp diode current (A)', needs: 'clamp' },
  { channel: 'damperCurrent', label: 'damper current (A)', needs: 'damper' },
];

export function waveformCsv(runs: readonly VariantRun[]): string {
  const columns: Array<{ header: string; values: Float64Array }> = [];
  for (const run of runs) {
    for (const col of COLUMNS) {
      if (col.needs === 'clamp' && !run.params.clamp) continue;
      if (col.needs === 'damper' && !run.params.damper) continue;
      columns.push({ header: `${run.variant}: ${col.label}`, values: run.recorder.waveform.channels[col.channel] });
    }
  }
  const time = runs[0]!.recorder.waveform.timeSeconds;
  const lines = [['time (s)', ...columns.map((c) => c.header)].join(',')];
  for (let i = 0; i < time.length; i++) {
    lines.push([time[i]!.toExponential(9), ...columns.map((c) => (c.values[i] ?? NaN).toPrecision(8))].join(','));
  }
  return `${lines.join('\n')}\n`;
}
