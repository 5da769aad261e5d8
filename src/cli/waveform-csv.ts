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

/** Rows per piece handed to the writer: large enough to write efficiently, small enough to hold. */
const ROWS_PER_PIECE = 2_000;

function csvColumns(runs: readonly VariantRun[]): Array<{ header: string; values: Float64Array }> {
  const columns: Array<{ header: string; values: Float64Array }> = [];
  for (const run of runs) {
    for (const col of COLUMNS) {
      if (col.needs === 'clamp' && !run.params.clamp) continue;
      if (col.needs === 'damper' && !run.params.damper) continue;
      columns.push({ header: `${run.variant}: ${col.label}`, values: run.recorder.waveform.channels[col.channel] });
    }
  }
  return columns;
}

/** Rows and an upper estimate of the file size (a time cell of 16 bytes, other cells of 15 with their commas). */
export function waveformCsvSize(runs: readonly VariantRun[]): { rows: number; columns: number; bytes: number } {
  const rows = runs[0]!.recorder.waveform.timeSeconds.length;
  const columns = 1 + csvColumns(runs).length;
  return { rows, columns, bytes: rows * (16 + 15 * (columns - 1) + 1) };
}

/** The CSV in pieces of a few thousand rows, so the file is streamed rather than built in memory. */
export function* waveformCsv(runs: readonly VariantRun[]): Generator<string> {
  const columns = csvColumns(runs);
  const time = runs[0]!.recorder.waveform.timeSeconds;
  yield `${['time (s)', ...columns.map((c) => c.header)].join(',')}\n`;
  for (let start = 0; start < time.length; start += ROWS_PER_PIECE) {
    const lines: string[] = [];
    for (let i = start; i < Math.min(time.length, start + ROWS_PER_PIECE); i++) {
      lines.push([time[i]!.toExponential(9), ...columns.map((c) => (c.values[i] ?? NaN).toPrecision(8))].join(','));
    }
    yield `${lines.join('\n')}\n`;
  }
}
