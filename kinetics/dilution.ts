/**
 * Concentrations after mixing, from stock concentrations and volumes: C1 V1 = C2 V2,
 * so each species' concentration in the cell is C2 = C1 V1 / V_total, with V_total the
 * sum of the volumes mixed (volumes taken as additive, common practice for dilute
 * aqueous solutions). The working is kept, so the dilution can be shown.
 */
export interface StockPortion {
  name: string;
  /** Stock concentration, mol/L (0 for a solvent). */
  stock_M: number;
  volume_mL: number;
}

export interface MixedSpecies { name: string; concentration_M: number; working: string }

export type MixOutcome = { ok: true; total_mL: number; species: MixedSpecies[] } | { ok: false; error: string };

const g = (x: number): string => String(Number(x.toPrecision(6)));

export function concentrationsAfterMixing(portions: readonly StockPortion[], total_mL?: number): MixOutcome {
  if (portions.length === 0) return { ok: false, error: 'no portions given; name each stock with its concentration and the volume taken.' };
  for (const p of portions) {
    if (!(p.volume_mL > 0) || !Number.isFinite(p.volume_mL)) return { ok: false, error: `${p.name}: volume ${p.volume_mL} mL is not a positive number; give the volume taken, in mL.` };
    if (!(p.stock_M >= 0) || !Number.isFinite(p.stock_M)) return { ok: false, error: `${p.name}: stock concentration ${p.stock_M} M is not a number ≥ 0; give it in mol/L.` };
  }
  const sum = portions.reduce((s, p) => s + p.volume_mL, 0);
  const total = total_mL ?? sum;
  if (!(total >= sum)) return { ok: false, error: `the total volume ${total} mL is less than the ${g(sum)} mL mixed; give the final volume, or leave it out.` };
  return {
    ok: true, total_mL: total,
    species: portions.filter((p) => p.stock_M > 0).map((p) => {
      const c = (p.stock_M * p.volume_mL) / total;
      return { name: p.name, concentration_M: c, working: `${p.name}: ${g(p.stock_M)} M × ${g(p.volume_mL)} mL / ${g(total)} mL = ${g(c)} M` };
    }),
  };
}
