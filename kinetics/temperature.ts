/**
 * The one place where Celsius becomes kelvin. T/K = t/°C + 273.15 (exact, by the
 * definition of the Celsius scale).
 */
export const ZERO_CELSIUS_K = 273.15;

export function celsiusToKelvin(temperature_C: number): number {
  return temperature_C + ZERO_CELSIUS_K;
}

export function kelvinToCelsius(temperature_K: number): number {
  return temperature_K - ZERO_CELSIUS_K;
}

/** Molar gas constant, J mol⁻¹ K⁻¹ (CODATA 2018, exact since the 2019 SI redefinition). */
export const GAS_CONSTANT_J_PER_MOL_K = 8.314462618;
