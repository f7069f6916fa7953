//! Physical constants in cgs (CODATA 2018 exact or recommended values; (common practice)).

/// Boltzmann constant k_B [erg K⁻¹] (CODATA 2018, exact).
pub const K_BOLTZMANN: f64 = 1.380649e-16;
/// Proton mass m_p [g] (CODATA 2018).
pub const M_PROTON: f64 = 1.672_621_923_69e-24;
/// Elementary charge e [esu = statC] (CODATA 2018, 1.602176634e-19 C × c/10).
pub const E_CHARGE: f64 = 4.803_204_712_570_263e-10;
/// Speed of light c [cm s⁻¹] (exact).
pub const C_LIGHT: f64 = 2.997_924_58e10;
/// Electron volt [erg] (exact).
pub const EV: f64 = 1.602_176_634e-12;
/// Proton rest energy m_p c² [erg] (CODATA 2018: 938.27208816 MeV).
pub const M_PROTON_C2: f64 = 938.272_088_16e6 * EV;
/// Parsec [cm] (IAU 2015: 648000/π au).
pub const PARSEC: f64 = 3.085_677_581_491_367e18;
/// Kilometre per second [cm s⁻¹].
pub const KM_PER_S: f64 = 1.0e5;
/// Hydrogen ionisation temperature χ_H/k_B [K] used by the Cen (1992) fit (from memory).
pub const T_HI_CEN: f64 = 157_809.1;
/// Hydrogen ionisation temperature χ_H/k_B [K] used by the Hui & Gnedin (1997) fits (from memory).
pub const T_HI_HG: f64 = 157_807.0;
