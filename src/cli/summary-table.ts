// The terminal summary of `simulate`: one column per variant, one row per metric, with units.

import { formatSi } from '../circuit/si-number.js';
import type { VariantName } from '../circuit/scenario.js';
import type { SimulationReport } from '../analysis/simulation-report.js';

type Metrics = NonNullable<SimulationReport['variants'][VariantName]>;
/** A row; `shown` leaves out rows of parts the scenario does not have. */
type Row = [label: string, cell: (m: Metrics) => string, shown?: (m: Metrics) => boolean];

const si = (unit: string) => (v: number | undefined | null): string => (v === undefined || v === null ? '—' : formatSi(v, unit));
const volts = si('V');

const ROWS: Row[] = [
  ['peak drain voltage', (m) => volts(m.peakDrainVoltage)],
  ['margin to rating', (m) => volts(m.marginToRating) + (m.marginToRating < 0 ? '  OVER' : '')],
  ['margin to derated limit', (m) => volts(m.marginToDeratedLimit) + (m.marginToDeratedLimit < 0 ? '  OVER' : '')],
  ['ring frequency after turn-off', (m) => (m.ringFrequency === null ? 'none (damped out)' : formatSi(m.ringFrequency, 'Hz'))],
  ['clamp voltage (mean, above rail)', (m) => volts(m.clampVoltageMean)],
  ['clamp ripple (peak-to-peak)', (m) => (m.clampVoltageRipple === undefined ? '—'
    : `${volts(m.clampVoltageRipple)} (${((100 * m.clampVoltageRipple) / m.clampVoltageMean!).toFixed(1)} %)`)],
  ['clamp resistor power', (m) => si('W')(m.clampResistorPower)],
  ['clamp diode peak current', (m) => si('A')(m.clampDiodePeakCurrent)],
  ['drain peak above clamp level', (m) => volts(m.peakAboveClamp)],
  ['clamp diode loss', (m) => si('W')(m.clampDiodePower)],
  ['clamp diode reverse charge', (m) => si('C')(m.clampDiodeReverseCharge), (m) => (m.clampDiodeReverseCharge ?? 0) > 0],
  ['avalanche energy per cycle', (m) => `${formatSi(m.avalancheEnergyPerCycle, 'J')} (${formatSi(m.avalanchePower, 'W')})`, (m) => m.avalancheEnergyPerCycle > 0],
  ['damper resistor power', (m) => si('W')(m.damperResistorPower)],
  ['switch turn-on (Coss) loss', (m) => si('W')(m.switchTurnOnLossPower)],
  ['current when the switch opens', (m) => si('A')(m.turnOffCurrent)],
  ['switch turn-off (current fall) loss', (m) => si('W')(m.turnOffLossPower), (m) => m.turnOffLossPower > 0],
  ['peak primary current', (m) => si('A')(m.peakPrimaryCurrent)],
  ['conduction', (m) => m.conduction],
  ['turn-off by', (m) => `${m.turnOff}, D = ${m.dutyCycle.toFixed(3)}`],
  ['steady state', (m) => `${m.orbit}, ${m.cycles} cycles`],
  ['evaluations per period', (m) => Math.round(m.stats.evaluationsPerPeriod).toString()],
  ['wall time', (m) => `${m.stats.wallTimeMs.toFixed(0)} ms`],
];

export function summaryTable(report: SimulationReport): string {
  const names = Object.keys(report.variants) as VariantName[];
  const header = ['', ...names];
  const rows = ROWS.filter(([, , shown]) => !shown || names.some((n) => shown(report.variants[n]!)));
  const body = rows.map(([label, cell]) => [label, ...names.map((n) => cell(report.variants[n]!))]);
  const table = [header, ...body];
  const widths = header.map((_, i) => Math.max(...table.map((r) => r[i]!.length)));
  const render = (r: string[]): string => r.map((c, i) => (i === 0 ? c.padEnd(widths[i]!) : c.padStart(widths[i]!))).join('   ').trimEnd();
  const lines = [
    `Scenario: ${report.scenario}`,
    `Supply ${volts(report.supplyVoltage)}, reflected output ${volts(report.reflectedVoltage)}; transistor rating ${volts(report.voltageRating)}, derated limit ${volts(report.deratedLimit)} (${Math.round((100 * report.deratedLimit) / report.voltageRating)} %${Math.abs(report.deratedLimit / report.voltageRating - 0.8) < 1e-9 ? ', common practice' : ', from the design block'})`,
    `Drain capacitance over 0…Vin + VR: energy equivalent Co(er) ${si('F')(report.drainCapacitanceEnergyEquivalent)}, charge equivalent Co(tr) ${si('F')(report.drainCapacitanceChargeEquivalent)}`,
    '',
    render(header),
    ...body.map(render),
  ];
  const unsettled = names.filter((n) => !report.variants[n]!.settled);
  if (unsettled.length > 0) lines.push('', `Not settled: ${unsettled.map((n) => `${n} (${report.variants[n]!.orbit})`).join(', ')}. The figures are from its last cycles.`);
  lines.push('', 'Design aid only, not compliance evidence. Primary-side nodes can be lethal; see the README, "Safety".');
  return lines.join('\n');
}
