/**
 * The one place where interface units meet solver units.
 *
 * Interface (recipe, report): µm, cm^-3, cm^-2, cm^2/s, °C, minutes.
 * Inside solver2d: lengths in µm, time in s, concentrations in cm^-3, diffusivities in µm^2/s.
 * Keeping cm^-3 inside avoids rescaling every concentration; the only mixed product is
 * the dose ∫C dz, which carries the µm→cm factor below.
 */

/** Boltzmann constant, eV/K (CODATA 2018, exact by SI definition). */
export const BOLTZMANN_EV_PER_K = 8.617333262e-5;

const CM2_PER_S_TO_UM2_PER_S = 1e8;
export const UM_TO_CM = 1e-4;
const SECONDS_PER_MINUTE = 60;

export function kelvin(temperatureC: number): number {
  return temperatureC + 273.15;
}

/** Thermal energy kT in eV at a temperature in °C. */
export function thermalEnergyEv(temperatureC: number): number {
  return BOLTZMANN_EV_PER_K * kelvin(temperatureC);
}

export function minutesToSeconds(minutes: number): number {
  return minutes * SECONDS_PER_MINUTE;
}

export function diffusivityToSolver(dCm2PerS: number): number {
  return dCm2PerS * CM2_PER_S_TO_UM2_PER_S;
}

/** ∫C dz with C in cm^-3 and z in µm gives cm^-2 after this factor. */
export function doseFromConcentrationUm(concentrationTimesUm: number): number {
  return concentrationTimesUm * UM_TO_CM;
}

/** Concentration (cm^-3) that spreads a dose (cm^-2) over a thickness (µm). */
export function concentrationFromDose(doseCm2: number, thicknessUm: number): number {
  return doseCm2 / (thicknessUm * UM_TO_CM);
}
