// Device events: each is a rising zero crossing of a function of the state, valid in one mode,
// leading to another. Known instants (switch on, a timed turn-off, the end of the turn-off delay)
// are not events: the simulation makes them segment boundaries.

import type { CircuitParams } from './circuit-params.js';
import { stateScales } from './circuit-params.js';
import { ModeModel, RECOVERED_CHARGE_FRACTION, modeKey, type Mode } from './modes.js';
import { IC, IM, IP, QD, VC, VD, VJ, ICH } from './state.js';

export type DeviceName = 'switch' | 'channel' | 'outputDiode' | 'clampDiode' | 'bodyDiode' | 'avalanche';

export interface ModeEvent {
  name: string;
  device: DeviceName;
  /** Rises through zero when the event happens. */
  g: (x: ArrayLike<number>) => number;
  /** Typical magnitude of g (A, V or C), for "is it at zero" tests. */
  scale: number;
  next: Mode;
}

export interface ModeEntry { model: ModeModel; events: ModeEvent[] }

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
      const model = new ModeModel(this.params, mode);
      entry = { model, events: this.eventsOf(model) };
      this.cache.set(key, entry);
    }
    return entry;
  }

  /** Enters a mode: its entry, with x made consistent with it. */
  enter(mode: Mode, x: number[]): ModeEntry {
    const entry = this.entry(mode);
    entry.model.enter(x);
    return entry;
  }

  private eventsOf(mm: ModeModel): ModeEvent[] {
    const p = this.params;
    const { current, voltage } = this.scales;
    const mode = mm.mode;
    const sig = (x: ArrayLike<number>) => mm.signals(x);
    // Where the drain is free its voltage is a state, and the magnetizing voltage (the output diode
    // off) follows from it and the primary current: the event functions read them without the
    // mode's other signals. odex samples them many times per step (bias-48v: about a fifth of the
    // signal evaluations were the events').
    const free = mode.drain === 'free';
    const drainVoltage = free ? (x: ArrayLike<number>) => x[VD]! : (x: ArrayLike<number>) => sig(x).drainVoltage;
    const lm = p.magnetizingInductance, llk = p.leakageInductance;
    const magnetizingVoltage = free && !mode.outputDiodeOn
      ? (x: ArrayLike<number>) => (lm * (p.supplyVoltage - x[VD]! - p.primaryResistance * x[IP]!)) / (lm + llk)
      : (x: ArrayLike<number>) => sig(x).magnetizingVoltage;
    const events: ModeEvent[] = [];
    const add = (name: string, device: DeviceName, scale: number, next: Partial<Mode>, g: ModeEvent['g']): void => {
      events.push({ name, device, scale, next: { ...mode, ...next }, g });
    };

    if (mode.drain === 'switch' && p.control.kind === 'peak-current') {
      const ipk = p.control.peakCurrent;
      add('peak current reached', 'switch', current, { drain: 'free', channelFalling: p.currentFallTime > 0 }, (x) => x[IP]! - ipk);
    }
    if (mode.outputDiodeOn) {
      add('output diode off', 'outputDiode', current, { outputDiodeOn: false }, (x) => x[IP]! - x[IM]!);
    } else {
      const vr = p.reflectedVoltage;
      add('output diode on', 'outputDiode', voltage, { outputDiodeOn: true }, (x) => -magnetizingVoltage(x) - vr);
    }
    if (mode.channelFalling) add('channel current at zero', 'channel', current, { channelFalling: false }, (x) => -x[ICH]!);

    const clamp = p.clamp;
    if (clamp) {
      const vin = p.supplyVoltage, vf = clamp.diodeDrop;
      const rec = clamp.recovery;
      const recovered = rec ? RECOVERED_CHARGE_FRACTION * current * rec.transitTime : 0;
      // Ideal: the diode stops when its current falls to 0. Charge control: when the junction
      // charge qE = q + TM·i does, and the current source of the recovery takes over.
      const stopName = rec ? 'clamp diode recovering' : 'clamp diode off';
      const stopTo: Mode['clampDiode'] = rec ? 'recovering' : 'off';
      const stopping = (i: (x: ArrayLike<number>) => number) => (x: ArrayLike<number>) => -(i(x) + (rec ? x[QD]! / rec.transitTime : 0));
      if (clamp.loopInductance > 0) {
        // The branch has a state of its own: its events hold whatever pins the drain.
        const cj = clamp.diodeCapacitance;
        if (mode.clampDiode === 'off') {
          add('clamp diode on', 'clampDiode', voltage, { clampDiode: 'on' },
            cj > 0 ? (x) => x[VJ]! - vf : (x) => drainVoltage(x) - (vin + x[VC]!) - vf);
        } else if (mode.clampDiode === 'on') {
          add(stopName, 'clampDiode', current, { clampDiode: stopTo }, stopping((x) => x[IC]!));
        } else {
          add('clamp diode on', 'clampDiode', voltage, { clampDiode: 'on' }, (x) => sig(x).clampDiodeVoltage - vf);
          add('clamp diode recovered', 'clampDiode', recovered, { clampDiode: 'off' }, (x) => recovered - x[QD]!);
        }
      } else if (mode.drain === 'clamp') {
        add(stopName, 'clampDiode', current, { drain: 'free', clampDiode: stopTo }, stopping((x) => sig(x).clampDiodeCurrent));
        if (p.avalancheVoltage !== null) {
          const vav = p.avalancheVoltage;
          add('avalanche (clamp above breakdown)', 'avalanche', voltage, { drain: 'avalanche', clampDiode: 'off' }, (x) => vin + x[VC]! + vf - vav);
        }
      } else if (mode.drain === 'free' || mode.drain === 'avalanche') {
        add('clamp diode on', 'clampDiode', voltage, { drain: 'clamp', clampDiode: 'on' }, (x) => drainVoltage(x) - (vin + x[VC]!) - vf);
      }
      if (clamp.loopInductance === 0 && mode.clampDiode === 'recovering') {
        add('clamp diode recovered', 'clampDiode', recovered, { clampDiode: 'off' }, (x) => recovered - x[QD]!);
      }
    }

    if (mode.drain === 'free') {
      const vb = p.bodyDiodeDrop;
      add('body diode on', 'bodyDiode', voltage, { drain: 'body' }, (x) => -x[VD]! - vb);
      if (p.avalancheVoltage !== null) {
        const vav = p.avalancheVoltage;
        add('avalanche', 'avalanche', voltage, { drain: 'avalanche' }, (x) => x[VD]! - vav);
      }
    }
    if (mode.drain === 'body') add('body diode off', 'bodyDiode', current, { drain: 'free' }, (x) => -sig(x).bodyDiodeCurrent);
    if (mode.drain === 'avalanche') add('avalanche ends', 'avalanche', current, { drain: 'free' }, (x) => -sig(x).avalancheCurrent);
    return events;
  }
}
