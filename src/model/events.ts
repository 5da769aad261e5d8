// Device events: each is a rising zero crossing of an affine function of the state, valid in
// one mode, leading to another. Known instants (switch on, fixed-duty turn-off) are not events:
// the simulation makes them segment boundaries.

import { combine, constant, evaluate, rateOf, unit, IM, IP, VD, type AffineForm } from './affine.js';
import type { CircuitParams } from './circuit-params.js';
import { stateScales } from './circuit-params.js';
import { buildMode, modeKey, type Mode, type ModeModel } from './modes.js';

export type DeviceName = 'switch' | 'outputDiode' | 'clampDiode' | 'bodyDiode';

export interface ModeEvent {
  name: string;
  device: DeviceName;
  g: AffineForm;
  /** Typical magnitude of g (A or V), for "is it at zero" tests. */
  scale: number;
  /** dg/dt in this mode (per time unit), for deciding a tie at g = 0. */
  rate: AffineForm;
  next: Mode;
}

export interface ModeEntry extends ModeModel { events: ModeEvent[] }

/** All modes of one variant's circuit, built on first use. */
export class SwitchingNodeModel {
  readonly params: CircuitParams;
  readonly scales: { current: number; voltage: number };
  private readonly cache = new Map<string, ModeEntry>();

  constructor(params: CircuitParams) {
    this.params = params;
    this.scales = stateScales(params);
  }

  entry(mode: Mode): ModeEntry {
    const key = modeKey(mode);
    let entry = this.cache.get(key);
    if (!entry) {
      const built = buildMode(this.params, mode);
      entry = { ...built, events: this.eventsOf(built).map((e) => ({ ...e, rate: rateOf(e.g, built.system) })) };
      this.cache.set(key, entry);
    }
    return entry;
  }

  private eventsOf(mm: ModeModel): Array<Omit<ModeEvent, 'rate'>> {
    const p = this.params;
    const { current, voltage } = this.scales;
    const { mode, forms } = mm;
    const events: Array<Omit<ModeEvent, 'rate'>> = [];
    if (mode.drain === 'switch' && p.control.kind === 'peak-current') {
      events.push({
        name: 'switch off (peak current)', device: 'switch', scale: current,
        g: combine([1, unit(IP)], [1, constant(-p.control.peakCurrent)]),
        next: { ...mode, drain: 'free' },
      });
    }
    if (mode.outputDiodeOn) {
      events.push({
        name: 'output diode off', device: 'outputDiode', scale: current,
        g: combine([1, unit(IP)], [-1, unit(IM)]),
        next: { ...mode, outputDiodeOn: false },
      });
    } else {
      events.push({
        name: 'output diode on', device: 'outputDiode', scale: voltage,
        g: combine([-1, forms.magnetizingVoltage], [1, constant(-p.reflectedVoltage)]),
        next: { ...mode, outputDiodeOn: true },
      });
    }
    if (mode.drain === 'free') {
      if (p.clamp) {
        events.push({
          name: 'clamp diode on', device: 'clampDiode', scale: voltage,
          g: combine([1, unit(VD)], [-1, buildMode(p, { ...mode, drain: 'clamp' }).forms.drainVoltage]),
          next: { ...mode, drain: 'clamp' },
        });
      }
      events.push({
        name: 'body diode on', device: 'bodyDiode', scale: voltage,
        g: combine([-1, unit(VD)], [1, constant(-p.bodyDiodeDrop)]),
        next: { ...mode, drain: 'body' },
      });
    }
    if (mode.drain === 'clamp') {
      events.push({
        name: 'clamp diode off', device: 'clampDiode', scale: current,
        g: combine([-1, forms.clampDiodeCurrent]),
        next: { ...mode, drain: 'free' },
      });
    }
    if (mode.drain === 'body') {
      events.push({
        name: 'body diode off', device: 'bodyDiode', scale: current,
        g: combine([-1, forms.bodyDiodeCurrent]),
        next: { ...mode, drain: 'free' },
      });
    }
    return events;
  }

  /**
   * Makes the state consistent with a mode just entered: algebraic drain voltages take their
   * constrained value and, with the output diode off, im = ip.
   */
  enter(mode: Mode, x: number[]): ModeEntry {
    const entry = this.entry(mode);
    if (mode.drain !== 'free') x[VD] = evaluate(entry.forms.drainVoltage, x);
    if (!mode.outputDiodeOn) x[IM] = x[IP]!;
    return entry;
  }
}
