/**
 * Physical and astronomical constants, each with its 1-sigma uncertainty (0 when exact by
 * definition), its unit (VOUnits) and its published source.
 */
export interface Constant {
  /** Stable machine name, used as a key by clients. */
  name: string;
  symbol: string;
  value: number;
  /** 1-sigma standard uncertainty, same unit as value; 0 for exact or nominal (defining) values. */
  uncertainty: number;
  unit: string;
  source: string;
}

const CODATA = 'CODATA 2018 (Tiesinga et al. 2021, Rev. Mod. Phys. 93, 025010)';
const SI_EXACT = 'SI 2019 defining constant (exact); CODATA 2018';

/** Speed of light in vacuum, m s^-1 (exact, SI). */
export const C = 299792458;
/** Newtonian constant of gravitation, m^3 kg^-1 s^-2 (CODATA 2018). */
export const G = 6.6743e-11;
export const G_SIGMA = 0.00015e-11;
/** Planck constant, J s (exact, SI 2019). */
export const H_PLANCK = 6.62607015e-34;
/** Reduced Planck constant h/(2 pi), J s (exact, SI 2019). */
export const HBAR = H_PLANCK / (2 * Math.PI);
/** Boltzmann constant, J K^-1 (exact, SI 2019). */
export const K_B = 1.380649e-23;
/** Elementary charge, C (exact, SI 2019): 1 eV = E_CHARGE J. */
export const E_CHARGE = 1.602176634e-19;
/** Nominal solar mass parameter, m^3 s^-2 (IAU 2015 Resolution B3). */
export const GM_SUN = 1.3271244e20;
/** Nominal solar radius, m (IAU 2015 Resolution B3). */
export const R_SUN = 6.957e8;
/** Nominal terrestrial mass parameter, m^3 s^-2 (IAU 2015 Resolution B3), for the earthMass unit. */
export const GM_EARTH_NOMINAL = 3.986004e14;
/** Nominal jovian mass parameter, m^3 s^-2 (IAU 2015 Resolution B3), for the jupiterMass unit. */
export const GM_JUPITER_NOMINAL = 1.2668653e17;
/** Astronomical unit, m (exact, IAU 2012 Resolution B2). */
export const AU = 149597870700;
/** Parsec, m: (648000/pi) au (exact, IAU 2015 Resolution B2). */
export const PARSEC = (648000 / Math.PI) * AU;
/** Geocentric gravitational constant (TT-compatible), m^3 s^-2 (IERS Conventions 2010, Table 1.1). */
export const GM_EARTH = 3.986004418e14;
export const GM_EARTH_SIGMA = 8e5;
/** Earth equatorial radius, m (IERS Conventions 2010, Table 1.1). */
export const R_EARTH = 6378136.6;
export const R_EARTH_SIGMA = 0.1;
/** Earth dynamical form factor J2, dimensionless (IERS Conventions 2010, Table 1.1). */
export const J2_EARTH = 1.0826359e-3;
export const J2_EARTH_SIGMA = 1e-10;
/** Potential of the geoid, m^2 s^-2 (IERS Conventions 2010, Table 1.1). */
export const W0 = 62636856.0;
export const W0_SIGMA = 0.5;
/** L_G = 1 - d(TT)/d(TCG), dimensionless (IAU 2000 Resolution B1.9; IERS Conventions 2010, defining). */
export const L_G = 6.969290134e-10;
/** Nominal mean angular velocity of the Earth, rad s^-1 (IERS Conventions 2010, Table 1.1). */
export const OMEGA_EARTH = 7.292115e-5;
/** Standard acceleration of gravity, m s^-2 (3rd CGPM 1901, exact). */
export const G0 = 9.80665;
/** Julian year, s: 365.25 d of 86400 s (IAU; exact). */
export const JULIAN_YEAR = 365.25 * 86400;

export const CONSTANTS: readonly Constant[] = Object.freeze([
  { name: 'speed_of_light', symbol: 'c', value: C, uncertainty: 0, unit: 'm.s-1', source: SI_EXACT },
  { name: 'gravitational_constant', symbol: 'G', value: G, uncertainty: G_SIGMA, unit: 'm3.kg-1.s-2', source: CODATA },
  { name: 'planck_constant', symbol: 'h', value: H_PLANCK, uncertainty: 0, unit: 'J.s', source: SI_EXACT },
  { name: 'reduced_planck_constant', symbol: 'hbar', value: HBAR, uncertainty: 0, unit: 'J.s', source: SI_EXACT },
  { name: 'boltzmann_constant', symbol: 'k_B', value: K_B, uncertainty: 0, unit: 'J.K-1', source: SI_EXACT },
  { name: 'elementary_charge', symbol: 'e', value: E_CHARGE, uncertainty: 0, unit: 'C', source: SI_EXACT },
  { name: 'solar_mass_parameter', symbol: 'GM_sun', value: GM_SUN, uncertainty: 0, unit: 'm3.s-2', source: 'IAU 2015 Resolution B3 (nominal, exact by definition)' },
  { name: 'solar_radius', symbol: 'R_sun', value: R_SUN, uncertainty: 0, unit: 'm', source: 'IAU 2015 Resolution B3 (nominal, exact by definition)' },
  { name: 'terrestrial_mass_parameter_nominal', symbol: 'GM_earth_N', value: GM_EARTH_NOMINAL, uncertainty: 0, unit: 'm3.s-2', source: 'IAU 2015 Resolution B3 (nominal, exact by definition)' },
  { name: 'jovian_mass_parameter_nominal', symbol: 'GM_jupiter_N', value: GM_JUPITER_NOMINAL, uncertainty: 0, unit: 'm3.s-2', source: 'IAU 2015 Resolution B3 (nominal, exact by definition)' },
  { name: 'astronomical_unit', symbol: 'au', value: AU, uncertainty: 0, unit: 'm', source: 'IAU 2012 Resolution B2 (exact)' },
  { name: 'parsec', symbol: 'pc', value: PARSEC, uncertainty: 0, unit: 'm', source: 'IAU 2015 Resolution B2 (exact: 648000/pi au)' },
  { name: 'earth_gm', symbol: 'GM_earth', value: GM_EARTH, uncertainty: GM_EARTH_SIGMA, unit: 'm3.s-2', source: 'IERS Conventions 2010 (TN 36), Table 1.1, TT-compatible' },
  { name: 'earth_equatorial_radius', symbol: 'a_E', value: R_EARTH, uncertainty: R_EARTH_SIGMA, unit: 'm', source: 'IERS Conventions 2010 (TN 36), Table 1.1' },
  { name: 'earth_j2', symbol: 'J2', value: J2_EARTH, uncertainty: J2_EARTH_SIGMA, unit: '', source: 'IERS Conventions 2010 (TN 36), Table 1.1' },
  { name: 'geoid_potential', symbol: 'W0', value: W0, uncertainty: W0_SIGMA, unit: 'm2.s-2', source: 'IERS Conventions 2010 (TN 36), Table 1.1' },
  { name: 'geoid_rate_constant', symbol: 'L_G', value: L_G, uncertainty: 0, unit: '', source: 'IAU 2000 Resolution B1.9; IERS Conventions 2010 (TN 36), Table 1.1 (defining)' },
  { name: 'earth_angular_velocity', symbol: 'omega_E', value: OMEGA_EARTH, uncertainty: 0, unit: 'rad.s-1', source: 'IERS Conventions 2010 (TN 36), Table 1.1 (nominal)' },
  { name: 'standard_gravity', symbol: 'g_0', value: G0, uncertainty: 0, unit: 'm.s-2', source: '3rd CGPM (1901), exact' },
  { name: 'julian_year', symbol: 'a_J', value: JULIAN_YEAR, uncertainty: 0, unit: 's', source: 'IAU: 365.25 d of 86400 s (exact)' },
]);
