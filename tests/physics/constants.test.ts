import { describe, expect, it } from 'vitest';
import { ATOMIC_MASS_CONSTANT_KG, ELECTRON_MASS_U, ELEMENTARY_CHARGE_C, chargeToMass_C_per_kg } from '../../src/physics/constants';

// Values typed from the CODATA 2018 adjustment (Tiesinga et al., Rev. Mod. Phys. 93, 025010, 2021).
describe('physical constants (CODATA 2018)', () => {
  it('elementary charge is the exact SI value', () => {
    expect(ELEMENTARY_CHARGE_C).toBe(1.602176634e-19);
  });
  it('atomic mass constant', () => {
    expect(ATOMIC_MASS_CONSTANT_KG).toBe(1.6605390666e-27);
  });
  it('electron mass in u', () => {
    expect(ELECTRON_MASS_U).toBe(5.48579909065e-4);
  });
  it('e/u matches the CODATA Faraday-based value 96 485 332.12 C/kg (F/M_u, CODATA 2018)', () => {
    // F = 96 485.332 12 C/mol and M_u = 1e-3 kg/mol (to the 1e-10 level used in 2018).
    expect(chargeToMass_C_per_kg(1) / 96_485_332.12).toBeCloseTo(1, 9);
  });
});
