// The settled stress per variant: one row each, a column per metric, the optional columns only
// when some variant has the part, flags over the rating and the derated limit.

import { $, $all, el } from './dom.js';
import type { SimulateAnswer, VariantName } from './api.js';
import { fmtMargin, fmtNumber, fmtSi, fmtVolts } from './format.js';
import { COLOURS, VARIANTS, variantLabel } from './plot-style.js';

type Report = SimulateAnswer['report'];
type Metrics = NonNullable<Report['variants'][VariantName]>;

/**
 * Columns for parts the design may not have: shown when some variant reports the metric
 * ("clamp") or a non-zero value of it ("non-zero"), so an ideal design keeps its narrow table.
 */
function syncOptionalColumns(report: Report): Set<string> {
  const present = Object.values(report.variants).filter((m): m is Metrics => Boolean(m));
  const shown = new Set<string>();
  for (const th of $all('#metrics thead th[data-shown]')) {
    const metric = th.dataset.metric!;
    const value = (m: Metrics): unknown => (m as unknown as Record<string, unknown>)[metric];
    const visible = th.dataset.shown === 'clamp'
      ? present.some((m) => value(m) !== undefined && value(m) !== null)
      : present.some((m) => { const x = value(m); return typeof x === 'number' && Number.isFinite(x) && x !== 0; });
    th.hidden = !visible;
    if (visible) shown.add(metric);
  }
  return shown;
}

export function fillTable(report: Report): void {
  const body = $('#metrics tbody');
  body.replaceChildren();
  const optional = syncOptionalColumns(report);
  const wanted = (metric: string): boolean => !document.querySelector(`#metrics thead th[data-metric="${metric}"][data-shown]`) || optional.has(metric);
  const columns = $all('#metrics thead th:not([hidden])').length;
  for (const v of VARIANTS) {
    const m = report.variants[v];
    const swatch = el('span', { class: 'swatch' });
    swatch.style.background = COLOURS[v];
    const row = el('tr', { dataset: { variant: v } },
      el('th', { scope: 'row' }, swatch, el('span', { class: 'vname', text: v }), el('span', { class: 'vdesc', text: m ? variantLabel(v, report.variants).split(' · ')[1] : '' })));
    body.append(row);
    if (!m) {
      row.className = 'absent';
      row.append(el('td', { colspan: columns - 1, text: v === 'clamp' ? 'no clamp in this design' : 'no damper in this design' }));
      continue;
    }
    const cell = (metric: string, value: number | boolean | undefined | null, text: string, flag: 'rating' | 'derated' | null = null): HTMLTableCellElement => {
      const td = el('td', { dataset: { metric } });
      row.append(td);
      if (value === undefined || value === null) {
        td.textContent = '—';
        td.className = 'na';
        td.title = metric === 'ringFrequency' ? 'no ring after turn-off strong enough to time (damped within about a period)' : 'not in this variant';
        return td;
      }
      td.dataset.value = String(value);
      td.textContent = text;
      if (flag) {
        td.classList.add(flag === 'rating' ? 'over-rating' : 'over-derated');
        td.title = flag === 'rating' ? 'over the transistor rating' : 'over the derated limit';
        // A margin's minus sign already says "over"; only the peak carries the word.
        if (metric === 'peakDrainVoltage') td.append(' ', el('span', { class: `flag flag-${flag}`, text: flag === 'rating' ? 'over rating' : 'over derated' }));
      }
      return td;
    };
    const overRating = m.peakDrainVoltage > report.voltageRating;
    const overDerated = m.peakDrainVoltage > report.deratedLimit;
    cell('peakDrainVoltage', m.peakDrainVoltage, fmtVolts(m.peakDrainVoltage), overRating ? 'rating' : overDerated ? 'derated' : null);
    cell('marginToRating', m.marginToRating, fmtMargin(m.marginToRating), m.marginToRating < 0 ? 'rating' : null);
    cell('marginToDeratedLimit', m.marginToDeratedLimit, fmtMargin(m.marginToDeratedLimit), m.marginToDeratedLimit < 0 ? 'derated' : null);
    cell('clampVoltageMean', m.clampVoltageMean, fmtSi(m.clampVoltageMean, 'V'));
    cell('clampVoltageRipple', m.clampVoltageRipple, fmtSi(m.clampVoltageRipple, 'V', 3));
    cell('clampResistorPower', m.clampResistorPower, fmtSi(m.clampResistorPower, 'W', 3));
    cell('damperResistorPower', m.damperResistorPower, fmtSi(m.damperResistorPower, 'W', 3));
    cell('clampDiodePeakCurrent', m.clampDiodePeakCurrent, fmtSi(m.clampDiodePeakCurrent, 'A', 3));
    if (wanted('peakAboveClamp')) cell('peakAboveClamp', m.peakAboveClamp, fmtSi(m.peakAboveClamp, 'V', 3));
    if (wanted('clampDiodePower')) cell('clampDiodePower', m.clampDiodePower, fmtSi(m.clampDiodePower, 'W', 3));
    if (wanted('clampDiodeReverseCharge')) cell('clampDiodeReverseCharge', m.clampDiodeReverseCharge, fmtSi(m.clampDiodeReverseCharge, 'C', 3));
    cell('turnOffCurrent', m.turnOffCurrent, fmtSi(m.turnOffCurrent, 'A', 4));
    if (wanted('turnOffLossPower')) cell('turnOffLossPower', m.turnOffLossPower, fmtSi(m.turnOffLossPower, 'W', 3));
    if (wanted('avalancheEnergyPerCycle')) {
      cell('avalancheEnergyPerCycle', m.avalancheEnergyPerCycle, fmtSi(m.avalancheEnergyPerCycle, 'J', 3))
        .append(el('span', { class: 'sub', dataset: { metric: 'avalanchePower', value: String(m.avalanchePower) }, text: `${fmtSi(m.avalanchePower, 'W', 3)} mean` }));
    }
    cell('ringFrequency', m.ringFrequency, fmtSi(m.ringFrequency, 'Hz', 4));
    const steady = cell('settled', m.settled, m.settled ? 'settled' : m.orbit);
    if (!m.settled) steady.classList.add('unsettled');
    steady.dataset.orbit = m.orbit;
    steady.append(el('span', { class: 'sub', text: m.conduction, title: m.conduction === 'DCM' ? 'the output diode stops before the next turn-on' : 'the output diode still conducts at the next turn-on' }));
    cell('cycles', m.cycles, String(m.cycles));
  }
  const plateau = report.supplyVoltage + report.reflectedVoltage;
  const line = $('#plateau');
  line.textContent = `off-state plateau Vin + VR = ${fmtNumber(report.supplyVoltage)} + ${fmtNumber(report.reflectedVoltage)} = ${fmtNumber(plateau)} V · rating ${fmtNumber(report.voltageRating)} V · derated ${fmtNumber(report.deratedLimit)} V`;
  line.classList.toggle('warn', report.voltageRating <= plateau);
  if (report.voltageRating <= plateau) line.textContent += ' — the rating is not above Vin + VR: no clamp can hold the drain under it';
  fillCapacitanceEquivalents(report, plateau);
}

/** The curve as the two constants a datasheet quotes, so a measured part can be compared. */
function fillCapacitanceEquivalents(report: Report, plateau: number): void {
  const holder = $('#coss-equivalents');
  const er = report.drainCapacitanceEnergyEquivalent, tr = report.drainCapacitanceChargeEquivalent;
  holder.hidden = !(Number.isFinite(er) && Number.isFinite(tr));
  if (holder.hidden) return;
  const figure = (metric: string, value: number, name: string): HTMLElement => el('b', { dataset: { metric, value: String(value) }, text: `${name} ${fmtSi(value, 'F', 4)}` });
  holder.replaceChildren(
    `Transistor drain capacitance over 0…Vin + VR (${fmtNumber(plateau)} V) as datasheet constants: `,
    figure('drainCapacitanceEnergyEquivalent', er, 'Co(er)'), ' stores the same energy, ',
    figure('drainCapacitanceChargeEquivalent', tr, 'Co(tr)'), ' takes the same charge; the winding capacitance is not included.',
  );
}
