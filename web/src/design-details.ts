// The design panel's lower half: the allowance and loss line, part stresses, notes and cautions,
// the worked equations, and the worst-case drain plot.

import { $, button, el } from './dom.js';
import type { DesignAnswer } from './api.js';
import { fmtNumber, fmtSi, fmtVolts, readSi } from './format.js';
import { numCell, verdictBadge } from './panel-common.js';
import { react, type PlotSpec } from './plotly.js';
import { AXIS, BASE_LAYOUT, COLOURS, describePlot, LEGEND_ON_TOP, limitLevels, plotConfig, US, VARIANTS } from './plot-style.js';
import { fmtMargin } from './format.js';

const DESIGN_LABELS = { bare: 'bare · no clamp', clamp: 'clamp · the designed RCD clamp', damped: 'damped · clamp + the designed RC damper' } as const;

export function drawDesignDetails(data: DesignAnswer): void {
  const d = data.design;
  const hand = d.hand;
  let lossLine = document.getElementById('design-losses');
  if (!lossLine) {
    lossLine = el('p', { id: 'design-losses', class: 'design-losses' });
    $('#design-verification').after(lossLine);
  }
  const l = d.losses;
  lossLine.replaceChildren(
    `Every corner (${d.corners.map((c) => c.name).join('; ')}) is held ${fmtSi(d.allowance, 'V', 3)} below the derated limit for what the model leaves out; the peak is set at “${d.limitingCorner}”. `,
    `Clamp and damper losses at “${l.corner}”: ${fmtSi(l.clamp, 'W', 3)} + ${fmtSi(l.damper, 'W', 3)} = ${fmtSi(l.total, 'W', 3)}, ${fmtNumber(100 * l.share, 3)} % of the ${fmtSi(l.outputPower, 'W', 3)} output; budget ${l.budget === null ? 'none' : fmtSi(l.budget, 'W', 3)} `,
    verdictBadge(l.pass),
  );

  $('#design-stresses tbody').replaceChildren(...d.stresses.map((p) => {
    const value = p.unit === 'V' ? `Vf ${fmtSi(p.value, 'V', 3)}` : fmtSi(p.value, p.unit, 3);
    const rated = p.suggestedRating !== undefined
      ? el('td', { dataset: { value: String(p.suggestedRating) } }, fmtVolts(p.suggestedRating), el('span', { class: 'sub', text: `${fmtNumber(100 * (p.voltageMargin ?? 0), 2)} % margin` }))
      : el('td', { class: 'na', text: '—' });
    let arrangement = el('td', { class: 'na', text: '—' });
    const a = p.arrangement;
    if (a?.ok) {
      arrangement = el('td', { class: 'left' },
        `${a.count} × ${a.caseName}${a.count > 1 && p.preferredPerResistor ? ` in series, ${fmtSi(p.preferredPerResistor.value, 'Ω', 3)} each` : ''}`,
        el('span', { class: 'sub', text: `${fmtSi(a.powerPerResistor, 'W', 2)} and ${fmtSi(a.voltagePerResistor, 'V', 3)} each; allowed ${fmtSi(a.allowedPower, 'W', 2)}, ${fmtSi(a.allowedVoltage, 'V', 3)}` }));
      if (a.count > 1 && p.preferredPerResistor) arrangement.append(el('span', { class: 'sub', text: `nearest preferred value per part: ${fmtSi(p.preferredPerResistor.total, 'Ω', 3)} in all` }));
      if (a.hotSpot) arrangement.append(' ', el('span', { class: 'flag flag-derated', text: 'hot spot', title: 'more than 0.1 W in one chip resistor: mind the copper and its neighbours' }));
    } else if (a) arrangement = el('td', { class: 'left over-derated', text: a.reason });
    return el('tr', { dataset: { part: p.part } },
      el('th', { scope: 'row', text: p.part }),
      el('td', { dataset: { value: String(p.value) }, text: value }),
      numCell(p.workingVoltage, fmtVolts(p.workingVoltage)),
      numCell(p.power, fmtSi(p.power, 'W', 3)),
      numCell(p.peakCurrent, fmtSi(p.peakCurrent, 'A', 3)),
      rated, arrangement,
      el('td', { class: 'note', text: p.note ?? '' }),
    );
  }));

  // Notes, warnings and the standing cautions: visible, not folded.
  const notes = d.notes.map((text) => ({ text, kind: 'note' }));
  for (const w of data.warnings) notes.push({ text: `${w.path}: ${w.message}`, kind: 'warning' });
  if (hand.extracted) {
    notes.push({ kind: 'note', text: `The design used the drain capacitance ${fmtSi(hand.extracted.drainCapacitance, 'F', 3)} and leakage inductance ${fmtSi(hand.extracted.leakageInductance, 'H', 3)} extracted from the measured ring (Z0 = ${fmtSi(hand.extracted.characteristicImpedance, 'Ω', 3)}); the form still holds the scenario’s own values, which the main simulation and the studies use.` });
  }
  notes.push({ kind: 'caution', text: 'Verified at two corners only (worst case and nominal), with the parts at their nominal values. Diode recovery and parasitics outside the scenario are not modelled: measure the drain on the bench, with a probe rated for it, before relying on the margin.' });
  $('#design-notes').replaceChildren(...notes.map((n) => el('li', { class: n.kind, text: n.text })));

  $('#design-equations tbody').replaceChildren(...hand.equations.map((e) => el('tr', {},
    el('th', { scope: 'row', text: e.quantity }),
    el('td', { class: 'left formula', text: e.formula }),
    numCell(e.value, e.unit ? fmtSi(e.value, e.unit, 4) : fmtNumber(e.value, 4)),
    el('td', { class: 'note', text: e.source }),
  )));
  $('#design-equations-fold summary').textContent = `Worked equations and their sources (${hand.equations.length})`;
}

/**
 * The first turn-off in the worst-case traces: where the bare drain first rises through half its
 * plateau (the recording starts at a turn-on, while the drain may still be high from the last ring).
 */
function designTurnOffWindow(data: DesignAnswer): [number, number] | null {
  const d = data.design;
  const tr = data.worstCaseTraces.bare ?? data.worstCaseTraces.clamp;
  if (!tr) return null;
  const half = 0.5 * (d.verification.worstCase.conditions.supplyVoltage + d.hand.reflectedVoltage);
  const i = tr.values.findIndex((v, k) => k > 0 && v > half && tr.values[k - 1]! <= half);
  if (i < 0) return null;
  const t = tr.timeSeconds[i]!;
  const rings = (['bare', 'clamp'] as const).map((v) => d.verification.worstCase.variants[v]?.ringFrequency).filter((f): f is number => typeof f === 'number' && f > 0);
  const after = Math.max(rings.length ? 5 / Math.min(...rings) : 0, 1e-6);
  const end = tr.timeSeconds[tr.timeSeconds.length - 1]!;
  return [Math.max(0, t - 0.3e-6) * US, Math.min(end, t + after) * US];
}

export function drawDesignPlot(data: DesignAnswer, scenario: Record<string, unknown>, zoomed: boolean): void {
  const d = data.design;
  const wc = d.verification.worstCase;
  const rating = d.hand.voltageRating;
  const derated = d.hand.deratedLimit;
  const plateau = wc.conditions.supplyVoltage + d.hand.reflectedVoltage;
  const present = VARIANTS.filter((v) => data.worstCaseTraces[v]);
  const end = Math.max(...present.map((v) => { const ts = data.worstCaseTraces[v]!.timeSeconds; return ts[ts.length - 1]!; })) * US;
  const traces: PlotSpec[] = present.map((v) => ({
    type: 'scatter', mode: 'lines', meta: `variant:${v}`,
    name: `${DESIGN_LABELS[v]} — peak ${fmtVolts(wc.variants[v]!.peakDrainVoltage)}`,
    x: data.worstCaseTraces[v]!.timeSeconds.map((t) => t * US),
    y: data.worstCaseTraces[v]!.values,
    line: { color: COLOURS[v], width: v === 'bare' ? 1.3 : 1.7 },
    hovertemplate: `%{y:.1f} V at %{x:.3f} µs<extra>${v}</extra>`,
  }));
  // The worst case breaks down at the same voltage as the scenario: the bare trace flattens there.
  const sw = scenario.switch as Record<string, unknown> | undefined;
  const levels = limitLevels(0, end, { rating, derated, plateau, avalanche: readSi(sw?.avalancheVoltage ?? '', 'V'), plateauName: 'Vin,max + VR' });
  traces.push(...levels.traces);
  const window_ = zoomed ? designTurnOffWindow(data) : null;
  const layout = {
    ...BASE_LAYOUT,
    margin: { l: 62, r: 14, t: 34, b: 48 },
    legend: LEGEND_ON_TOP,
    xaxis: { ...AXIS, title: { text: window_ ? 'time from the start of the recorded cycles (µs) — display resolution' : 'time over the recorded settled cycles at the worst case (µs)' }, range: window_ ?? [0, end] },
    yaxis: { ...AXIS, title: { text: 'drain–source voltage (V)' }, rangemode: 'tozero' },
    annotations: levels.tags,
  };
  const plot = $('#design-plot');
  void react(plot, traces, layout, plotConfig('design worst case', present));
  describePlot(plot, `Drain–source voltage at the worst case of the design, ${present.join(', ')}`,
    `Peaks: ${present.map((v) => `${v} ${fmtVolts(wc.variants[v]!.peakDrainVoltage)}`).join(', ')}; derated limit ${fmtVolts(derated)}, margin ${fmtMargin(wc.margin)}.`);
  plot.dataset.view = window_ ? 'turn-off' : 'whole';
  button('#design-zoom-turnoff').disabled = Boolean(window_) || !designTurnOffWindow(data);
  button('#design-zoom-whole').disabled = !window_;
}
