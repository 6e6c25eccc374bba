import type { Report } from '@edgewise/solver2d';
import { fmtPlusMinus, fmtSci, table } from './format.ts';

/** A value to 3 significant figures with its error bar to 1, or — . */
function fmtWithError(v: number | null | undefined, e: number | null | undefined): string {
  if (v === null || v === undefined) return '—';
  const shown = Number(v.toPrecision(3)).toString();
  return e === null || e === undefined ? shown : `${shown} ± ${Number(e.toPrecision(1))}`;
}

function fmtSciError(v: number | null | undefined, e: number | null | undefined): string {
  if (v === null || v === undefined) return '—';
  return e === null || e === undefined ? fmtSci(v, 3) : `${fmtSci(v, 3)} ± ${fmtSci(e, 0)}`;
}

/** Breakdown per window, then depletion, peak field and capacitance per window and bias. */
export function electricalTables(report: Report): string {
  const e = report.electrical;
  if (!e) return '';
  const head = `electrical at 300 K under reverse bias (breakdown from ${e.ionisation}; an estimate: surface charge, field plates and oxide fields are not modelled)`;
  const breakdown = table(
    ['window', 'against', 'breakdown V', 'plane V', 'limited by'],
    e.windows.map((w, k) => (w === null
      ? [String(k + 1), '—', '—', '—', 'no junction']
      : [String(k + 1), w.biasAgainst, fmtWithError(w.breakdownV, w.errors?.breakdownV), fmtWithError(w.breakdownPlaneV, w.errors?.breakdownPlaneV), w.breakdownLimitedBy ?? '—'])),
  );
  const rows: string[][] = [];
  e.windows.forEach((w, k) => {
    if (w === null) return;
    e.biasV.forEach((v, b) => {
      const at = w.peakFieldAtUm[b];
      rows.push([
        String(k + 1), String(v), fmtSciError(w.peakFieldVPerCm[b], w.errors?.peakFieldVPerCm?.[b]), at ? `${at[0]}, ${at[1]}` : '—',
        fmtPlusMinus(w.depletionDepthUm[b], w.errors?.depletionDepthUm?.[b]), fmtPlusMinus(w.depletionLateralUm[b], w.errors?.depletionLateralUm?.[b]),
        fmtSciError(w.areaCapacitanceFPerCm2[b], w.errors?.areaCapacitanceFPerCm2?.[b]), fmtSciError(w.perimeterCapacitanceFPerCm[b], w.errors?.perimeterCapacitanceFPerCm?.[b]),
      ]);
    });
  });
  const perBias = table(['window', 'bias V', 'peak field V/cm', 'at x, z µm', 'depletion depth µm', 'depletion lateral µm', 'area C F/cm²', 'perimeter C F/cm'], rows);
  return `\n\n${head}\n${breakdown}\n\n${perBias}`;
}
