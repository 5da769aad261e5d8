// Modes of the switching node and their linear systems. A mode is the set of conducting
// devices; conducting devices are algebraic constraints on the drain voltage, never tiny
// resistances against Coss (that would be a picosecond time constant an explicit solver cannot step).

import { combine, constant, rateOf, systemFromRows, unit, IM, IP, STATE_SIZE, VC, VD, VS, type AffineForm, type AffineSystem } from './affine.js';
import type { CircuitParams } from './circuit-params.js';

/** The model integrates in microseconds: odex clamps its first step to ≥ 1e-4 of its time unit. */
export const SECONDS_PER_TIME_UNIT = 1e-6;

export type DrainState = 'switch' | 'free' | 'clamp' | 'body';
export interface Mode { drain: DrainState; outputDiodeOn: boolean }

export const modeKey = (m: Mode): string => `${m.drain}${m.outputDiodeOn ? '+out' : ''}`;

/** Affine quantities of one mode, all evaluated on the state (currents in A, voltages in V). */
export interface ModeForms {
  drainVoltage: AffineForm;
  damperCurrent: AffineForm;
  clampDiodeCurrent: AffineForm;
  bodyDiodeCurrent: AffineForm;
  /** Current in the transistor's channel while on (drain to source). */
  switchCurrent: AffineForm;
  magnetizingVoltage: AffineForm;
  /** Secondary current referred to the primary, im − ip while the output diode conducts. */
  secondaryCurrent: AffineForm;
}

export interface ModeModel { mode: Mode; system: AffineSystem; forms: ModeForms }

const ZERO = constant(0);

export function buildMode(p: CircuitParams, mode: Mode): ModeModel {
  const vin = p.supplyVoltage;
  const lm = p.magnetizingInductance;
  const llk = p.leakageInductance;
  const coss = p.drainCapacitance;
  const rs = p.damper?.resistance;
  const vs = unit(VS);
  const ip = unit(IP);

  let vd: AffineForm;
  switch (mode.drain) {
    case 'free': vd = unit(VD); break;
    case 'clamp': vd = combine([1, constant(vin + (p.clamp?.diodeDrop ?? 0))], [1, unit(VC)]); break;
    case 'body': vd = constant(-p.bodyDiodeDrop); break;
    case 'switch': {
      // Switch in parallel with the damper branch: vd·(1/Ron + 1/Rs) = ip + vs/Rs.
      if (rs === undefined) { vd = unit(IP, p.onResistance); break; }
      const rPar = (p.onResistance * rs) / (p.onResistance + rs);
      vd = combine([rPar, ip], [rPar / rs, vs]);
      break;
    }
  }
  const id = rs === undefined ? ZERO : combine([1 / rs, vd], [-1 / rs, vs]);
  // Voltage left for the two inductances after the winding resistance: u = Vin − vd − Rp·ip.
  const u = combine([1, constant(vin)], [-1, vd], [-p.primaryResistance, ip]);

  const perSecond: AffineForm[] = new Array<AffineForm>(STATE_SIZE).fill(ZERO);
  let vm: AffineForm;
  if (mode.outputDiodeOn) {
    vm = constant(-p.reflectedVoltage);
    perSecond[IM] = constant(-p.reflectedVoltage / lm);
    perSecond[IP] = combine([1 / llk, u], [1 / llk, constant(p.reflectedVoltage)]);
  } else {
    vm = combine([lm / (lm + llk), u]);
    perSecond[IP] = combine([1 / (lm + llk), u]);
    perSecond[IM] = perSecond[IP]!;
  }
  perSecond[VS] = p.damper ? combine([1 / p.damper.capacitance, id]) : ZERO;

  let icd = ZERO;
  if (p.clamp) {
    const { resistance: rc, capacitance: cc } = p.clamp;
    if (mode.drain === 'clamp') {
      perSecond[VC] = combine([1 / (cc + coss), ip], [-1 / (cc + coss), id], [-1 / (rc * (cc + coss)), unit(VC)]);
      icd = combine([1, ip], [-1, id], [-coss, perSecond[VC]!]);
    } else {
      perSecond[VC] = unit(VC, -1 / (rc * cc));
    }
  }
  perSecond[VD] = mode.drain === 'free'
    ? combine([1 / coss, ip], [-1 / coss, id])
    : rateOf(vd, systemFromRows(perSecond));

  const system = systemFromRows(perSecond.map((row) => combine([SECONDS_PER_TIME_UNIT, row])));
  const forms: ModeForms = {
    drainVoltage: vd,
    damperCurrent: id,
    clampDiodeCurrent: icd,
    bodyDiodeCurrent: mode.drain === 'body' ? combine([1, id], [-1, ip]) : ZERO,
    switchCurrent: mode.drain === 'switch' ? combine([1, ip], [-1, id]) : ZERO,
    magnetizingVoltage: vm,
    secondaryCurrent: mode.outputDiodeOn ? combine([1, unit(IM)], [-1, ip]) : ZERO,
  };
  return { mode, system, forms };
}
