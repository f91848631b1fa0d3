/**
 * Physical constants in SI units, CODATA 2018 recommended values
 * (Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021)).
 */

/** Elementary charge in C (exact since the 2019 SI redefinition). */
export const ELEMENTARY_CHARGE_C = 1.602176634e-19;

/** Atomic mass constant m_u = 1 u in kg (CODATA 2018). */
export const ATOMIC_MASS_CONSTANT_KG = 1.6605390666e-27;

/** Electron mass in u (CODATA 2018: 5.48579909065e-4 u). */
export const ELECTRON_MASS_U = 5.48579909065e-4;

/** Boltzmann constant in J/K (exact since 2019). */
export const BOLTZMANN_J_PER_K = 1.380649e-23;

/** Charge-to-mass ratio in C/kg of an ion of the given m/z (u per elementary charge), magnitude only. */
export function chargeToMass_C_per_kg(mz: number): number {
  return ELEMENTARY_CHARGE_C / (mz * ATOMIC_MASS_CONSTANT_KG);
}
