/**
 * The one place where non-SI units live. Scenario and result fields carry
 * their unit in the name (`diameter_mm`); the engine converts once at the
 * edge with these factors and works in SI (m, m³, m³/s, Pa, N, K, kg, s).
 *
 * @module
 */

/** Metres per millimetre. */
export const M_PER_MM = 1e-3;
/** Metres per inch (exact by definition, 1 in = 25.4 mm). */
export const M_PER_INCH = 0.0254;
/** Cubic metres per cubic centimetre. */
export const M3_PER_CM3 = 1e-6;
/** Square metres per square centimetre. */
export const M2_PER_CM2 = 1e-4;
/** Pascals per megapascal. */
export const PA_PER_MPA = 1e6;
/** Pascals per bar. */
export const PA_PER_BAR = 1e5;
/** Pascals per psi (lbf/in², from 1 lbf = 4.4482216152605 N, exact by definition). */
export const PA_PER_PSI = 4.4482216152605 / (M_PER_INCH * M_PER_INCH);
/** Newtons per kilonewton. */
export const N_PER_KN = 1e3;
/** Newtons per tonne-force (metric ton, standard gravity 9.80665 m/s²). */
export const N_PER_TONNE_FORCE = 1000 * 9.80665;
/** Newtons per US (short) ton-force, 2000 lbf. */
export const N_PER_US_TON_FORCE = 2000 * 4.4482216152605;
/** Kilograms per gram. */
export const KG_PER_G = 1e-3;
/** Kelvin offset of the Celsius scale. */
export const KELVIN_AT_0_C = 273.15;

/** Millimetres → metres. */
export const mmToM = (mm: number): number => mm * M_PER_MM;
/** Metres → millimetres. */
export const mToMm = (m: number): number => m / M_PER_MM;
/** Metres → inches. */
export const mToInch = (m: number): number => m / M_PER_INCH;
/** Cubic centimetres → cubic metres. */
export const cm3ToM3 = (cm3: number): number => cm3 * M3_PER_CM3;
/** Cubic metres → cubic centimetres. */
export const m3ToCm3 = (m3: number): number => m3 / M3_PER_CM3;
/** Square centimetres → square metres. */
export const cm2ToM2 = (cm2: number): number => cm2 * M2_PER_CM2;
/** Megapascals → pascals. */
export const mpaToPa = (mpa: number): number => mpa * PA_PER_MPA;
/** Pascals → megapascals. */
export const paToMpa = (pa: number): number => pa / PA_PER_MPA;
/** Pascals → bar. */
export const paToBar = (pa: number): number => pa / PA_PER_BAR;
/** Pascals → psi. */
export const paToPsi = (pa: number): number => pa / PA_PER_PSI;
/** Kilonewtons → newtons. */
export const knToN = (kn: number): number => kn * N_PER_KN;
/** Newtons → kilonewtons. */
export const nToKn = (n: number): number => n / N_PER_KN;
/** Newtons → tonne-force. */
export const nToTonneForce = (n: number): number => n / N_PER_TONNE_FORCE;
/** Newtons → US ton-force. */
export const nToUsTonForce = (n: number): number => n / N_PER_US_TON_FORCE;
/** Degrees Celsius → kelvin. */
export const cToK = (c: number): number => c + KELVIN_AT_0_C;
/** Kelvin → degrees Celsius. */
export const kToC = (k: number): number => k - KELVIN_AT_0_C;
/** Degrees Celsius → degrees Fahrenheit. */
export const cToF = (c: number): number => c * 1.8 + 32;
/** Kilograms → grams. */
export const kgToG = (kg: number): number => kg / KG_PER_G;
/** Cubic centimetres per second → cubic metres per second. */
export const cm3PerSToM3PerS = (v: number): number => v * M3_PER_CM3;
/** Degrees → radians. */
export const degToRad = (deg: number): number => (deg * Math.PI) / 180;
