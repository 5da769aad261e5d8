// A self-contained HTML report of a clamp design: no scripts, no external files; the plots are
// inline SVG drawn here from the drain traces the design kept (min/max per pixel column).

import type { Scenario } from '../circuit/scenario.js';
import { scenarioToJson } from '../circuit/scenario-json.js';
import { formatSi } from '../circuit/si-number.js';
import type { ReducedTrace } from '../analysis/display-reduction.js';
import { shownCandidates, type DesignPlots, type DesignResult } from './design-clamp.js';

const esc = (s: string): string => s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);
const si = (x: number | undefined | null, unit: string): string => (x === undefined || x === null || !Number.isFinite(x) ? '—' : esc(formatSi(x, unit)));
const COLOURS: Record<string, string> = { bare: '#b5562f', clamp: '#4b4fa6', damped: '#1f8a7a' };

interface PlotTrace extends ReducedTrace { name: string }
interface PlotFrame { from: number; to: number; unitScale: number; unitName: string; title: string; xLabel: string }

/** A round step for about `count` ticks over `span`. */
function tickStep(span: number, count: number): number {
  const raw = span / count;
  const decade = 10 ** Math.floor(Math.log10(raw));
  return ([1, 2, 5, 10].find((m) => m * decade >= raw) ?? 10) * decade;
}

export function drainPlotSvg(traces: readonly PlotTrace[], frame: PlotFrame, levels: ReadonlyArray<{ volts: number; label: string; dash: string }>): string {
  const width = 860, height = 320, left = 56, right = 16, top = 14, bottom = 40;
  const inside = traces.map((t) => {
    const keep = t.timeSeconds.map((ts, i) => [ts, t.values[i]!] as const).filter(([ts]) => ts >= frame.from && ts <= frame.to);
    return { name: t.name, points: keep };
  });
  const all = inside.flatMap((t) => t.points.map(([, v]) => v));
  const vMax = Math.max(...levels.map((l) => l.volts), ...all) * 1.05;
  const vMin = Math.min(0, ...all);
  const x = (t: number): number => left + ((width - left - right) * (t - frame.from)) / (frame.to - frame.from);
  const y = (v: number): number => top + ((height - top - bottom) * (vMax - v)) / (vMax - vMin);
  const lines = inside.map((t) => `<polyline fill="none" stroke="${COLOURS[t.name] ?? '#333'}" stroke-width="1.2" points="${t.points.map(([ts, v]) => `${x(ts).toFixed(1)},${y(v).toFixed(1)}`).join(' ')}"/>`);
  // Levels close together: the lowest one's label goes under its line.
  const hline = (v: number, label: string, dash: string, below: boolean): string =>
    `<line x1="${left}" x2="${width - right}" y1="${y(v).toFixed(1)}" y2="${y(v).toFixed(1)}" stroke="#7a5a2a" stroke-dasharray="${dash}"/><text x="${width - right - 4}" y="${(y(v) + (below ? 12 : -4)).toFixed(1)}" text-anchor="end" font-size="11" fill="#7a5a2a">${esc(label)}</text>`;
  const ticks: string[] = [];
  const vStep = tickStep(vMax - vMin, 6);
  for (let v = Math.ceil(vMin / vStep) * vStep; v <= vMax; v += vStep) {
    ticks.push(`<text x="${left - 6}" y="${(y(v) + 4).toFixed(1)}" text-anchor="end" font-size="11">${Number(v.toPrecision(6))}</text>`);
  }
  const tStep = tickStep((frame.to - frame.from) * frame.unitScale, 8) / frame.unitScale;
  for (let t = Math.ceil(frame.from / tStep) * tStep; t <= frame.to + 1e-6 * tStep; t += tStep) {
    ticks.push(`<line x1="${x(t).toFixed(1)}" x2="${x(t).toFixed(1)}" y1="${height - bottom}" y2="${height - bottom + 4}" stroke="#888"/><text x="${x(t).toFixed(1)}" y="${height - bottom + 16}" text-anchor="middle" font-size="11">${Number((t * frame.unitScale).toPrecision(6))}</text>`);
  }
  const legend = inside.map((t, i) => `<text x="${left + 8 + i * 120}" y="${top + 12}" font-size="12" fill="${COLOURS[t.name] ?? '#333'}">■ ${esc(t.name)}</text>`).join('');
  return `<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 ${width} ${height}" role="img" aria-label="${esc(frame.title)}">
<rect x="${left}" y="${top}" width="${width - left - right}" height="${height - top - bottom}" fill="#fbfaf6" stroke="#ccc"/>
${lines.join('\n')}
${levels.map((l) => hline(l.volts, l.label, l.dash, l.volts === Math.min(...levels.map((x) => x.volts)))).join('')}
${ticks.join('')}${legend}
<text x="${(left + width - right) / 2}" y="${height - 6}" text-anchor="middle" font-size="12">${esc(frame.xLabel)} (${esc(frame.unitName)})</text>
<text x="14" y="${(top + height - bottom) / 2}" transform="rotate(-90 14 ${(top + height - bottom) / 2})" text-anchor="middle" font-size="12">drain–source voltage (V)</text>
</svg>`;
}

/**
 * The window around the first recorded turn-off: from a little before the switch opens to ten
 * times the time the clamped drain takes to its peak (the spike, the clamp's conduction and the
 * first periods of the ring after it), in nanoseconds after the switch opened.
 */
function turnOffFrame(traces: readonly PlotTrace[], corner: string): PlotFrame {
  const peakTime = (t: PlotTrace): number => {
    let at = 0, best = -Infinity;
    t.values.forEach((v, i) => { if (t.timeSeconds[i]! >= 0 && v > best) { best = v; at = t.timeSeconds[i]!; } });
    return at;
  };
  const clamped = traces.find((t) => t.name === 'clamp') ?? traces[0]!;
  const end = Math.max(...traces.map((t) => t.timeSeconds[t.timeSeconds.length - 1] ?? 0));
  const span = Math.min(end, Math.max(10 * peakTime(clamped), 50e-9));
  return { from: -0.1 * span, to: span, unitScale: 1e9, unitName: 'ns after the switch opens', title: `drain voltage at turn-off, corner "${corner}"`, xLabel: 'time' };
}

/** Leaves of the scenario file as written: "60u" stays "60u", a curve stays its list. */
function asWritten(raw: unknown, path = ''): Array<[string, string]> {
  if (raw !== null && typeof raw === 'object' && !Array.isArray(raw)) {
    // "$schema" points an editor at the JSON Schema: not an input of the design.
    return Object.entries(raw as Record<string, unknown>).filter(([k]) => k !== '$schema')
      .flatMap(([k, v]) => asWritten(v, path ? `${path}.${k}` : k));
  }
  return [[path, typeof raw === 'string' ? raw : JSON.stringify(raw)]];
}

/**
 * `raw`: the scenario file as parsed, its values as the user wrote them (SI prefixes and all);
 * without it (a scenario made in code) the scenario is written back in its file format.
 */
export function designReportHtml(scenario: Scenario, d: DesignResult, plots: DesignPlots, raw?: unknown): string {
  const h = d.hand;
  const t = h.targets;
  const rows = (cells: string[][]): string => cells.map((r) => `<tr>${r.map((c) => `<td>${c}</td>`).join('')}</tr>`).join('\n');
  const limit = h.deratedLimit - d.allowance;
  const verification = d.corners.map((c) => (['bare', 'clamp', 'damped'] as const).filter((vName) => c.variants[vName]).map((vName, i) => {
    const m = c.variants[vName]!;
    const name = `${esc(c.name)}${c.name === d.limitingCorner ? ' <b>(sets the peak)</b>' : ''}<br><small>Vin ${si(c.inputVoltage, 'V')}, Llk ${si(c.leakageInductance, 'H')}, Ipk ${si(c.peakCurrent, 'A')}, R ${si(c.partValues.clampResistance, 'Ω')}, C ${si(c.partValues.clampCapacitance, 'F')}, Coss × ${c.partValues.drainCapacitanceFactor.toFixed(2)}</small>`;
    const built = vName === 'clamp' || (vName === 'damped' && d.damperFitted);
    const role = vName === 'bare' ? 'bare (no clamp), for reference' : built ? `${vName}${vName === 'clamp' && !d.damperFitted ? ' (as built)' : ''}` : `${vName} (not fitted: for comparison)`;
    return [i === 0 ? name : '', esc(role), si(m.peakDrainVoltage, 'V'), si(limit - m.peakDrainVoltage, 'V'), si(m.clampVoltageMean, 'V'), si(m.clampVoltageRipple, 'V'), si(m.clampResistorPower, 'W'), si(m.damperResistorPower, 'W'), i === 0 || (vName === 'clamp' && c.variants.bare) ? (c.pass ? 'pass' : '<b>FAIL</b>') : ''];
  })).flat();
  const l = d.losses;
  const stress = d.stresses.map((s) => [
    esc(s.part), si(s.value, s.unit), si(s.workingVoltage, 'V'), si(s.power, 'W'), si(s.peakCurrent, 'A'),
    s.suggestedRating ? `≥ ${si(s.suggestedRating, 'V')}` : '',
    s.arrangement ? (s.arrangement.ok ? esc(`${s.arrangement.count} × ${s.arrangement.caseName}${s.preferredPerResistor ? ` of ${formatSi(s.preferredPerResistor.value, 'Ω')}` : ''}, ${formatSi(s.arrangement.powerPerResistor, 'W')} each`) : esc(s.arrangement.reason)) : '',
    esc(s.note ?? ''),
  ]);
  const inputs = asWritten(raw ?? scenarioToJson(scenario)).map(([path, text]) => [`<code>${esc(path)}</code>`, `<code>${esc(text)}</code>`]);
  const settings: Array<[string, string]> = [
    ['input range', `${si(h.corners.reduce((a, c) => Math.min(a, c.supplyVoltage), Infinity), 'V')} … ${si(h.worstCase.supplyVoltage, 'V')}`],
    ['drain derating, allowance', `${(100 * t.drainDerating).toFixed(0)} % of ${si(scenario.switch.voltageRating, 'V')}, less ${si(d.allowance, 'V')}`],
    ['loss budget', t.lossBudget.kind === 'absolute' ? si(t.lossBudget.value, 'W') : `${(100 * t.lossBudget.value).toFixed(1)} % of the output`],
    ['tolerances', `leakage +${(100 * t.leakageTolerance).toFixed(0)} %, clamp R ±${(100 * t.resistorTolerance).toFixed(0)} %, clamp C ±${(100 * t.capacitorTolerance).toFixed(0)} %, peak current +${(100 * t.peakCurrentTolerance).toFixed(0)} %, Coss ±${(100 * t.drainCapacitanceTolerance).toFixed(0)} %`],
    ['preferred series', `resistors ${t.resistorSeries}, capacitors ${t.capacitorSeries}; ripple ${(100 * t.clampRippleMinimum).toFixed(0)}–${(100 * t.clampRippleMaximum).toFixed(0)} %`],
    ['damper', `design.damper "${t.damper}"`],
  ];
  const handSet = d.candidates.find((c) => c.handDesign && c.damper === null);
  const handBuilt = d.candidates.find((c) => c.handDesign && c.damper !== null);
  const chosen = d.candidates[d.chosenCandidate];
  const candidateRows = shownCandidates(d).map((c) => [
    `${si(c.clamp.resistance, 'Ω')} ∥ ${si(c.clamp.capacitance, 'F')}`,
    c.damper ? `${si(c.damper.resistance, 'Ω')} + ${si(c.damper.capacitance, 'F')}` : 'none',
    si(c.peakDrainVoltage, 'V'), si(c.margin, 'V'), si(c.totalLoss, 'W'), String(c.partsCount),
    c.pass ? 'pass' : c.withinLimit ? '<b>FAIL</b> (loss)' : '<b>FAIL</b> (peak)',
    [c === chosen ? '<b>chosen</b>' : '', c.handDesign ? 'hand design' : ''].filter(Boolean).join(', '),
  ]);
  const limitLevels = [
    { volts: scenario.switch.voltageRating, label: `rating ${formatSi(scenario.switch.voltageRating, 'V')}`, dash: '6 4' },
    { volts: h.deratedLimit, label: `derated limit ${formatSi(h.deratedLimit, 'V')}`, dash: '2 3' },
    { volts: limit, label: `less the allowance ${formatSi(limit, 'V')}`, dash: '1 2' },
  ];
  const named = (traces: DesignPlots['worstCase'], pick: 'whole' | 'turnOff'): PlotTrace[] =>
    (['bare', 'clamp', 'damped'] as const).filter((v) => traces[v]).map((v) => ({ name: v, ...traces[v]![pick] }));
  const wholeTraces = named(plots.worstCase, 'whole');
  const wholeEnd = Math.max(...wholeTraces.map((x) => x.timeSeconds[x.timeSeconds.length - 1] ?? 0));
  const zoomTraces = named(plots.limiting.traces, 'turnOff');
  return `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><title>Clamp design: ${esc(d.scenario)}</title>
<style>
body { font: 14px/1.45 system-ui, sans-serif; color: #2a2622; background: #f6f3ec; margin: 2rem auto; max-width: 960px; padding: 0 1rem; }
h1 { font-size: 1.5rem; color: #4a2a5c; } h2 { font-size: 1.1rem; color: #4a2a5c; border-bottom: 1px solid #d9cfbf; margin-top: 2rem; }
table { border-collapse: collapse; width: 100%; background: #fffdf8; } td, th { border: 1px solid #e2dacb; padding: 3px 6px; text-align: left; vertical-align: top; }
th { background: #efe8da; } .caution { background: #f8e9c8; border-left: 4px solid #b5562f; padding: .6rem .9rem; } code, pre { background: #efe8da; padding: 1px 4px; }
.verdict { font-size: 1.1rem; font-weight: bold; } .two { columns: 2; column-gap: 2rem; } .two table { break-inside: avoid; }
</style></head><body>
<h1>Clamp design: ${esc(d.scenario)}</h1>
<p class="caution"><b>Design aid only, not compliance evidence.</b> Primary-side nodes of mains supplies are lethal and stay charged after unplugging (½·C·V²); clamp resistors run hot.
Creepage, clearance, insulation, fault behaviour, avalanche ratings and temperatures are not modelled. Check every part against its datasheet, follow local codes and
the applicable safety standards, and have the design reviewed by qualified, licensed people.</p>
<p class="verdict">${d.pass ? 'Pass' : 'FAIL'}: peak drain voltage at every corner against the derated limit of ${si(h.deratedLimit, 'V')} (${(100 * t.drainDerating).toFixed(0)} % of ${si(scenario.switch.voltageRating, 'V')}) less an allowance of ${si(d.allowance, 'V')} for what the model leaves out (${d.corners.every((c) => c.pass) ? 'pass' : 'FAIL'}; the corner "${esc(d.limitingCorner)}" sets the peak), and clamp${d.damperFitted ? ' plus damper' : ''} loss against the budget${l.budget === null ? '' : ` of ${si(l.budget, 'W')}`} (${l.pass ? 'pass' : 'FAIL'}, ${(100 * l.share).toFixed(1)} % of the output). ${d.damperFitted ? 'With an RC damper.' : '<b>No damper</b>: the least-loss set that the search kept has none.'}</p>

<h2>Inputs, as written in the scenario</h2>
<table><tr><th>field</th><th>as written</th></tr>
${rows(inputs)}</table>
<p>Design settings in effect (the defaults where the file is silent):</p>
<table>${rows(settings.map(([k, v]) => [esc(k), v]))}</table>
${h.extracted ? `<p>From the measured ring: Coss ${si(h.extracted.drainCapacitance, 'F')}, leakage ${si(h.extracted.leakageInductance, 'H')}.</p>` : ''}

<h2>Hand design (the starting point)</h2>
<p>From the published equations at the worst case: clamp ${si(h.resistance, 'Ω')} ∥ ${si(h.capacitance, 'F')} (exact ${si(h.resistanceExact, 'Ω')}, ${si(h.capacitanceExact, 'F')}), damper ${si(h.damper.resistance, 'Ω')} + ${si(h.damper.capacitance, 'F')}.
Simulated at the worst case: clamp alone ${si(handSet?.peakDrainVoltage, 'V')} (margin ${si(handSet?.margin, 'V')}, ${si(handSet?.totalLoss, 'W')})${handBuilt ? `; with its damper ${si(handBuilt.peakDrainVoltage, 'V')} (${si(handBuilt.totalLoss, 'W')})` : ''}.</p>
<table><tr><th>quantity</th><th>formula</th><th>value</th><th>source</th></tr>
${rows(h.equations.map((e) => [esc(e.quantity), `<code>${esc(e.formula)}</code>`, si(e.value, e.unit), esc(e.source)]))}</table>

<h2>Candidates, side by side (simulated at the worst case)</h2>
<p>${d.search.clampSets} clamp sets and ${d.candidates.length} candidates tried (${d.search.simulations} simulations in the whole design${d.search.workers > 0 ? `, on ${d.search.workers} worker processes` : ''}); the least loss first, the hand design shown wherever it ranks.</p>
<table><tr><th>clamp</th><th>damper</th><th>peak drain</th><th>margin</th><th>clamp${d.candidates.some((c) => c.damper) ? ' + damper' : ''} loss</th><th>parts</th><th>verdict</th><th></th></tr>
${rows(candidateRows)}</table>

<h2>Chosen parts</h2>
<p>In the scenario format: <code>"clamp": ${esc(JSON.stringify(d.clamp))}</code>${d.damperFitted ? `, <code>"damper": ${esc(JSON.stringify(d.damper))}</code>` : ` and <b>no damper</b> (leave the damper block out; the designed one, ${si(d.damper.resistance, 'Ω')} + ${si(d.damper.capacitance, 'F')}, is simulated below for comparison only)`}</p>
${d.adjustments.length ? `<ul>${d.adjustments.map((a) => `<li>Clamp resistor ${si(a.resistance, 'Ω')}, capacitor ${si(a.capacitance, 'F')} (worst-case peak ${si(a.worstCasePeak, 'V')}): ${esc(a.reason)}.</li>`).join('')}</ul>` : '<p>The hand design was kept.</p>'}

<h2>Corners: verification by settled simulation</h2>
<table><tr><th>corner</th><th>variant</th><th>peak drain</th><th>margin to limit less allowance</th><th>clamp mean</th><th>clamp ripple</th><th>clamp R power</th><th>damper R power</th><th>verdict</th></tr>
${rows(verification)}</table>

<h2>Loss budget</h2>
<p>At the corner "${esc(l.corner)}", as built: clamp ${si(l.clamp, 'W')} (resistor and diode)${d.damperFitted ? ` + damper ${si(l.damper, 'W')}` : ', no damper'} = ${si(l.total, 'W')}, <b>${(100 * l.share).toFixed(1)} %</b> of the ${si(l.outputPower, 'W')} output; budget ${l.budget === null ? 'none' : si(l.budget, 'W')}: <b>${l.pass ? 'pass' : 'FAIL'}</b>.</p>

<h2>Part stresses (simulated worst case)</h2>
<table><tr><th>part</th><th>value</th><th>working voltage</th><th>power</th><th>peak current</th><th>rating</th><th>arrangement</th><th>note</th></tr>
${rows(stress)}</table>

<h2>Drain voltage</h2>
<h3>At turn-off, corner "${esc(plots.limiting.corner)}" (sets the peak)</h3>
${zoomTraces.length ? drainPlotSvg(zoomTraces, turnOffFrame(zoomTraces, plots.limiting.corner), limitLevels) : '<p>No traces kept.</p>'}
<h3>Over the recorded settled cycles, worst case</h3>
${wholeTraces.length ? drainPlotSvg(wholeTraces, { from: 0, to: wholeEnd, unitScale: 1e6, unitName: 'µs', title: 'drain voltage at the worst case', xLabel: 'time over the recorded settled cycles' }, limitLevels) : '<p>No traces kept.</p>'}
${d.notes.length ? `<h2>Notes</h2><ul>${d.notes.map((n) => `<li>${esc(n)}</li>`).join('')}</ul>` : ''}
<p style="color:#6b6358;font-size:12px">Made by flyclamp. The model leaves out core loss, output ripple, the control loop and temperature; parts it does model are only as real as the scenario gives them (a Coss curve, the clamp loop, diode recovery). See the README.</p>
</body></html>
`;
}
