// A whole-cycle answer on the page: the drain plot, the clamp plot and the metrics table.

import type { SimulateAnswer } from './api.js';
import { drawClamp } from './clamp-plot.js';
import { clearCursors, drawDrain } from './drain-plot.js';
import { fillTable } from './metrics-table.js';

export { drawDrain };

export function drawResults(result: SimulateAnswer): void {
  // Cursors read values of the old answer; a new circuit starts without them.
  clearCursors();
  drawDrain(result, null);
  drawClamp(result);
  fillTable(result.report);
}
