// A self-contained HTML report of a clamp design: no scripts, no external files; the plot is
// inline SVG drawn from the worst-case settled waveforms (min/max per pixel column).

import type { Scenario } from '../circuit/scenario.js';
import { scenarioToJson } from '../circuit/scenario-json.js';
import { formatSi } from '../circuit/si-number.js';
import { reduceForDisplay } from '../analysis/display-reduction.js';
import type { VariantRun } from '../simulation/run-variant.js';
import type { DesignResult } from './design-clamp.js';

const esc = (s: string): string => s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);
const si = (x: number | undefined | null, unit: string): string => (x === undefined || x === null || !Number.isFinite(x) ? '—' : esc(formatSi(x, unit)));
const COLOURS: Record<string, string> = { bare: '#b5562f', clamp: '#4b4fa6', damped: '#1f8a7a' };

function drainPlotSvg(runs: readonly VariantRun[], rating: number, limit: number): string {
  const width = 860, height = 320, left = 56, right = 16, top = 14, bottom = 40;
  const traces = runs.map((r) => {
    const w = r.recorder.waveform;
    const end = w.timeSeconds[w.timeSeconds.length - 1]!;
    return { name: r.variant, ...reduceForDisplay(w.timeSeconds, w.channels.drainVoltage, 0, end, width - left - right), end };
  });
  const tEnd = Math.max(...traces.map((t) => t.end));
  const vMax = Math.max(rating, ...traces.flatMap((t) => t.values)) * 1.05;
  const vMin = Math.min(0, ...traces.flatMap((t) => t.values));
  const x = (t: number): number => left + ((width - left - right) * t) / tEnd;
  const y = (v: number): number => top + ((height - top - bottom) * (vMax - v)) / (vMax - vMin);
  const lines = traces.map((t) => `<polyline fill="none" stroke="${COLOURS[t.name] ?? '#333'}" stroke-width="1.2" points="${t.timeSeconds.map((ts, i) => `${x(ts).toFixed(1)},${y(t.values[i]!).toFixed(1)}`).join(' ')}"/>`);
  const hline = (v: number, label: string, dash: string): string =>
    `<line x1="${left}" x2="${width - right}" y1="${y(v).toFixed(1)}" y2="${y(v).toFixed(1)}" stroke="#7a5a2a" stroke-dasharray="${dash}"/><text x="${width - right - 4}" y="${(y(v) - 4).toFixed(1)}" text-anchor="end" font-size="11" fill="#7a5a2a">${esc(label)}</text>`;
  const ticks: string[] = [];
  for (let i = 0; i <= 5; i++) {
    const v = vMin + ((vMax - vMin) * i) / 5;
    ticks.push(`<text x="${left - 6}" y="${(y(v) + 4).toFixed(1)}" text-anchor="end" font-size="11">${v.toFixed(0)}</text>`);
    const t = (tEnd * i) / 5;
    ticks.push(`<text x="${x(t).toFixed(1)}" y="${height - bottom + 16}" text-anchor="middle" font-size="11">${(t * 1e6).toFixed(1)}</text>`);
  }
  const legend = traces.map((t, i) => `<text x="${left + 8 + i * 120}" y="${top + 12}" font-size="12" fill="${COLOURS[t.name] ?? '#333'}">■ ${esc(t.name)}</text>`).join('');
  return `<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 ${width} ${height}" role="img" aria-label="drain voltage at the worst case">
<rect x="${left}" y="${top}" width="${width - left - right}" height="${height - top - bottom}" fill="#fbfaf6" stroke="#ccc"/>
${lines.join('\n')}
${hline(rating, `rating ${formatSi(rating, 'V')}`, '6 4')}${hline(limit, `derated limit ${formatSi(limit, 'V')}`, '2 3')}
${ticks.join('')}${legend}
<text x="${(left + width - right) / 2}" y="${height - 6}" text-anchor="middle" font-size="12">time over the recorded settled cycles (µs)</text>
<text x="14" y="${(top + height - bottom) / 2}" transform="rotate(-90 14 ${(top + height - bottom) / 2})" text-anchor="middle" font-size="12">drain–source voltage (V)</text>
</svg>`;
}

export function designReportHtml(scenario: Scenario, d: DesignResult, worstCaseRuns: readonly VariantRun[]): string {
  const h = d.hand;
  const rows = (cells: string[][]): string => cells.map((r) => `<tr>${r.map((c) => `<td>${c}</td>`).join('')}</tr>`).join('\n');
  const limit = h.deratedLimit - d.allowance;
  const verification = d.corners.map((c) => (['bare', 'clamp', 'damped'] as const).map((vName) => {
    const m = c.variants[vName];
    const name = `${esc(c.name)}${c.name === d.limitingCorner ? ' <b>(sets the peak)</b>' : ''}<br><small>Vin ${si(c.inputVoltage, 'V')}, Llk ${si(c.leakageInductance, 'H')}, Ipk ${si(c.peakCurrent, 'A')}, R ${si(c.partValues.clampResistance, 'Ω')}, C ${si(c.partValues.clampCapacitance, 'F')}</small>`;
    return [vName === 'bare' ? name : '', vName, si(m?.peakDrainVoltage, 'V'), m ? si(limit - m.peakDrainVoltage, 'V') : '', si(m?.clampVoltageMean, 'V'), si(m?.clampVoltageRipple, 'V'), si(m?.clampResistorPower, 'W'), si(m?.damperResistorPower, 'W'), vName === 'bare' ? '' : (c.pass ? 'pass' : '<b>FAIL</b>')];
  })).flat();
  const l = d.losses;
  const stress = d.stresses.map((s) => [
    esc(s.part), si(s.value, s.unit), si(s.workingVoltage, 'V'), si(s.power, 'W'), si(s.peakCurrent, 'A'),
    s.suggestedRating ? `≥ ${si(s.suggestedRating, 'V')}` : '',
    s.arrangement ? (s.arrangement.ok ? esc(`${s.arrangement.count} × ${s.arrangement.caseName}${s.preferredPerResistor ? ` of ${formatSi(s.preferredPerResistor.value, 'Ω')}` : ''}, ${formatSi(s.arrangement.powerPerResistor, 'W')} each`) : esc(s.arrangement.reason)) : '',
    esc(s.note ?? ''),
  ]);
  return `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><title>Clamp design: ${esc(d.scenario)}</title>
<style>
body { font: 14px/1.45 system-ui, sans-serif; color: #2a2622; background: #f6f3ec; margin: 2rem auto; max-width: 960px; padding: 0 1rem; }
h1 { font-size: 1.5rem; color: #4a2a5c; } h2 { font-size: 1.1rem; color: #4a2a5c; border-bottom: 1px solid #d9cfbf; margin-top: 2rem; }
table { border-collapse: collapse; width: 100%; background: #fffdf8; } td, th { border: 1px solid #e2dacb; padding: 3px 6px; text-align: left; vertical-align: top; }
th { background: #efe8da; } .caution { background: #f8e9c8; border-left: 4px solid #b5562f; padding: .6rem .9rem; } code, pre { background: #efe8da; padding: 1px 4px; }
.verdict { font-size: 1.1rem; font-weight: bold; }
</style></head><body>
<h1>Clamp design: ${esc(d.scenario)}</h1>
<p class="caution"><b>Design aid only, not compliance evidence.</b> Primary-side nodes of mains supplies are lethal and stay charged after unplugging (½·C·V²); clamp resistors run hot.
Creepage, clearance, insulation, fault behaviour, avalanche ratings and temperatures are not modelled. Check every part against its datasheet, follow local codes and
the applicable safety standards, and have the design reviewed by qualified, licensed people.</p>
<p class="verdict">${d.pass ? 'Pass' : 'FAIL'}: peak drain voltage at every corner against the derated limit of ${si(h.deratedLimit, 'V')} (${(100 * h.targets.drainDerating).toFixed(0)} % of ${si(scenario.switch.voltageRating, 'V')}) less an allowance of ${si(d.allowance, 'V')} for what the model leaves out, and clamp plus damper loss against the budget${l.budget === null ? '' : ` of ${si(l.budget, 'W')}`}.</p>

<h2>Inputs</h2>
<pre>${esc(JSON.stringify(scenarioToJson(scenario), null, 2))}</pre>
<p>Worst case: Vin ${si(h.worstCase.supplyVoltage, 'V')}, leakage ${si(h.worstCase.leakageInductance, 'H')} (top of ±${(100 * h.targets.leakageTolerance).toFixed(0)} %), peak current ${si(h.worstCase.peakCurrent, 'A')}.
Nominal: Vin ${si(h.nominal.supplyVoltage, 'V')}, leakage ${si(h.nominal.leakageInductance, 'H')}.${h.extracted ? ` From the measured ring: Coss ${si(h.extracted.drainCapacitance, 'F')}, leakage ${si(h.extracted.leakageInductance, 'H')}.` : ''}</p>

<h2>Equations used</h2>
<table><tr><th>quantity</th><th>formula</th><th>value</th><th>source</th></tr>
${rows(h.equations.map((e) => [esc(e.quantity), `<code>${esc(e.formula)}</code>`, si(e.value, e.unit), esc(e.source)]))}</table>

<h2>Chosen parts</h2>
<p>In the scenario format: <code>"clamp": ${esc(JSON.stringify(d.clamp))}</code>, <code>"damper": ${esc(JSON.stringify(d.damper))}</code></p>
${d.adjustments.length ? `<ul>${d.adjustments.map((a) => `<li>Clamp resistor ${si(a.resistance, 'Ω')}, capacitor ${si(a.capacitance, 'F')} (worst-case peak ${si(a.worstCasePeak, 'V')}): ${esc(a.reason)}.</li>`).join('')}</ul>` : '<p>The hand design was verified without adjustment.</p>'}

<h2>Part stresses (simulated worst case)</h2>
<table><tr><th>part</th><th>value</th><th>working voltage</th><th>power</th><th>peak current</th><th>rating</th><th>arrangement</th><th>note</th></tr>
${rows(stress)}</table>

<h2>Verification by settled simulation</h2>
<table><tr><th>corner</th><th>variant</th><th>peak drain</th><th>margin to limit less allowance</th><th>clamp mean</th><th>clamp ripple</th><th>clamp R power</th><th>damper R power</th><th>verdict</th></tr>
${rows(verification)}</table>
<h2>Loss budget</h2>
<p>At the corner "${esc(l.corner)}", clamp and damper fitted: clamp ${si(l.clamp, 'W')} (resistor and diode) + damper ${si(l.damper, 'W')} = ${si(l.total, 'W')}, ${(100 * l.share).toFixed(1)} % of the ${si(l.outputPower, 'W')} output; budget ${l.budget === null ? 'none' : si(l.budget, 'W')}: <b>${l.pass ? 'pass' : 'FAIL'}</b>.</p>
<h2>Parts tried at the worst case</h2>
<table><tr><th>clamp</th><th>damper</th><th>peak drain</th><th>clamp + damper loss</th><th>parts</th><th>verdict</th></tr>
${rows(d.candidates.map((c) => [`${si(c.clamp.resistance, 'Ω')} ∥ ${si(c.clamp.capacitance, 'F')}`, c.damper ? `${si(c.damper.resistance, 'Ω')} + ${si(c.damper.capacitance, 'F')}` : 'none', si(c.peakDrainVoltage, 'V'), si(c.totalLoss, 'W'), String(c.partsCount), c.pass ? 'pass' : '<b>FAIL</b>']))}</table>
<h3>Drain voltage at the worst case</h3>
${drainPlotSvg(worstCaseRuns, scenario.switch.voltageRating, h.deratedLimit)}
${d.notes.length ? `<h2>Notes</h2><ul>${d.notes.map((n) => `<li>${esc(n)}</li>`).join('')}</ul>` : ''}
<p style="color:#6b6358;font-size:12px">Made by flyclamp. The model leaves out core loss, output ripple, the control loop and temperature; parts it does model are only as real as the scenario gives them (a Coss curve, the clamp loop, diode recovery). See the README.</p>
</body></html>
`;
}
