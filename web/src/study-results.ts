// A study's answer: the summary, the worst point per variant, the Monte Carlo spread, the points
// without a result, and every point (folded); the plot is in study-plots.ts.

import { $, el } from './dom.js';
import { fmtNumber, fmtVolts } from './format.js';
import { fmtField, formNumber } from './form-values.js';
import { marginCell, numCell, peakCell, variantHead } from './panel-common.js';
import { VARIANTS } from './plot-style.js';
import { drawStudyGrid, drawStudyHistogram, limitsAt, studyVariantLabel } from './study-plots.js';
import type { StudyShown } from './state.js';


function describeValues(values: Record<string, number>, nominals: Record<string, number | undefined>): string {
  return Object.entries(values).map(([path, v]) => {
    const n = nominals[path];
    const rel = n ? ` (${v >= n ? '+' : '−'}${fmtNumber(Math.abs(100 * (v / n - 1)), 3)} %)` : '';
    return `${path} = ${fmtField(path, v)}${rel}`;
  }).join(', ');
}

export function drawStudy(s: StudyShown): void {
  const { data, request, nominals } = s;
  const points = data.points;
  const present = VARIANTS.filter((v) => points.some((p) => p.variants?.[v]));
  const paths = Object.keys(points[0]?.values ?? {});
  const mc = data.kind === 'monte-carlo';
  $('#sweep-summary').replaceChildren(
    mc ? `Monte Carlo, ${points.length} samples` : `${data.kind === 'corners' ? 'Corners' : 'Range'} of ${points.length} points`,
    ' · request ', el('code', { text: request.label }),
    paths.includes('switch.voltageRating') ? ' · the rating and the derated limit follow the varied rating'
      : ` · rating ${fmtVolts(data.voltageRating)}, derated limit ${fmtVolts(data.deratedLimit)}`,
    ' · fields not listed stay at the values in the form',
  );

  // The derated limit of a study is the server's default fraction; say so when the form asks for another.
  const caution = $('#sweep-caution');
  const derating = formNumber('design.drainDerating');
  const used = data.deratedLimit / data.voltageRating;
  caution.hidden = !(derating !== undefined && Math.abs(derating - used) > 1e-9);
  if (!caution.hidden && derating !== undefined) {
    caution.textContent = `The study’s derated limit is ${fmtNumber(100 * used, 3)} % of the rating (${fmtVolts(data.deratedLimit)}): studies do not apply the design target of ${fmtNumber(100 * derating, 3)} % (${fmtVolts(derating * data.voltageRating)}). Margins and “over the limit” figures below are against ${fmtVolts(data.deratedLimit)}.`;
  }

  if (mc) drawStudyHistogram(data, present);
  else drawStudyGrid(data, present, paths[0] ?? '', nominals);

  $('#sweep-worst tbody').replaceChildren(...present.filter((v) => data.worst[v]).map((v) => {
    const w = data.worst[v]!;
    const { rating, derated } = limitsAt(points[w.index], data);
    return el('tr', { dataset: { variant: v, index: String(w.index) } },
      variantHead(v, studyVariantLabel(v, points).split(' · ')[1]),
      peakCell(w.peakDrainVoltage, rating, derated, { dataset: { metric: 'peakDrainVoltage' } }),
      marginCell(w.marginToRating),
      marginCell(w.marginToDeratedLimit),
      el('td', { text: `${w.index + 1} of ${points.length}` }),
      el('td', { class: 'left note', text: describeValues(w.values, nominals) }),
    );
  }));

  $('#sweep-stats-wrap').hidden = !mc;
  if (mc) {
    $('#sweep-stats tbody').replaceChildren(...present.filter((v) => data.monteCarlo?.[v]).map((v) => {
      const m = data.monteCarlo![v]!;
      const over = Math.round(m.fractionOverDeratedLimit * m.samples);
      const overCell = el('td', { dataset: { value: String(m.fractionOverDeratedLimit), metric: 'fractionOverDeratedLimit' } },
        `${fmtNumber(100 * m.fractionOverDeratedLimit, 3)} %`, el('span', { class: 'sub', text: `${over} of ${m.samples}` }));
      if (m.fractionOverDeratedLimit > 0) overCell.classList.add('over-derated');
      const p = m.percentiles;
      const pc = (value: number, key: string): HTMLTableCellElement => peakCell(value, data.voltageRating, data.deratedLimit, { dataset: { metric: key } });
      return el('tr', { dataset: { variant: v } },
        variantHead(v, studyVariantLabel(v, points).split(' · ')[1]),
        el('td', { text: String(m.samples) }), overCell,
        pc(p.p5, 'p5'), pc(p.p50, 'p50'), pc(p.p95, 'p95'), pc(p.p99, 'p99'), pc(p.max, 'max'));
    }));
  }

  // Points without a result, and points that did not settle.
  const items: HTMLElement[] = [];
  for (const p of points) {
    const where = ` (${describeValues(p.values, nominals)})`;
    if (p.failure) items.push(el('li', { class: 'warning', dataset: { index: String(p.index) } }, el('b', { text: `point ${p.index + 1}` }), `${where}: ${p.failure}`));
    else {
      const unsettled = Object.entries(p.variants ?? {}).filter(([, m]) => m && !m.settled).map(([v, m]) => `${v} ${m!.orbit}`);
      if (unsettled.length) items.push(el('li', { class: 'note', dataset: { index: String(p.index) } }, el('b', { text: `point ${p.index + 1}` }), `${where}: not settled — ${unsettled.join(', ')}; its peak is over the cycles run`));
    }
  }
  $('#sweep-failures').hidden = items.length === 0;
  $('#sweep-failures ul').replaceChildren(...items);

  $('#sweep-points thead').replaceChildren(el('tr', {},
    el('th', { scope: 'col', text: '#' }),
    ...paths.map((path) => el('th', { scope: 'col', class: 'path' }, el('code', { text: path }))),
    ...present.map((v) => el('th', { scope: 'col' }, 'Peak', el('span', { class: 'u', text: v }))),
  ));
  $('#sweep-points tbody').replaceChildren(...points.map((p) => {
    const { rating, derated } = limitsAt(p, data);
    return el('tr', { dataset: { index: String(p.index) } },
      el('th', { scope: 'row', text: String(p.index + 1) }),
      ...paths.map((path) => numCell(p.values[path], fmtField(path, p.values[path]!))),
      ...present.map((v) => (p.failure ? el('td', { class: 'na', text: 'failed', title: p.failure })
        : peakCell(p.variants?.[v]?.peakDrainVoltage, rating, derated, { dataset: { variant: v } }))),
    );
  }));
  $('#sweep-points-fold summary').textContent = `Every point (${points.length})`;
}
