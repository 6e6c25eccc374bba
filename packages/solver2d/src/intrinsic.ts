import { BOLTZMANN_EV_PER_K, kelvin } from './units.ts';

/**
 * Intrinsic carrier concentration of silicon at process temperatures:
 * ni = 3.87e16 · T^1.5 · exp(−0.605 eV / kT) cm^-3 (Plummer, Deal & Griffin, Silicon VLSI
 * Technology (2000), ch. 7; from memory). About 7.1e18 cm^-3 at 1000 °C.
 */
export function intrinsicCarriersCm3(temperatureC: number): number {
  const t = kelvin(temperatureC);
  return 3.87e16 * t ** 1.5 * Math.exp(-0.605 / (BOLTZMANN_EV_PER_K * t));
}

/**
 * Electron and hole concentrations from charge neutrality with all dopants ionised:
 * n − p = N_D − N_A and n·p = ni², so n = N/2 + √((N/2)² + ni²) with N the net doping.
 * Written as ni·(u + √(u² + 1)), u = N/2ni, which stays accurate at either sign of N.
 */
export function electronsOverNi(netCm3: number, niCm3: number): number {
  const u = netCm3 / (2 * niCm3);
  return u >= 0 ? u + Math.sqrt(u * u + 1) : 1 / (-u + Math.sqrt(u * u + 1));
}

export function carriers(netCm3: number, niCm3: number): { n: number; p: number } {
  const r = electronsOverNi(netCm3, niCm3);
  return { n: niCm3 * r, p: niCm3 / r };
}

/**
 * Built-in-field enhancement of a dominant dopant's flux, h = 1 + N/√(N² + 4ni²): from 1
 * when intrinsic to 2 when the dopant sets the carriers (common practice; Plummer, Deal &
 * Griffin (2000) ch. 7, from memory).
 */
export function fieldEnhancement(netCm3: number, niCm3: number): number {
  const a = Math.abs(netCm3);
  return 1 + a / Math.sqrt(a * a + 4 * niCm3 * niCm3);
}
