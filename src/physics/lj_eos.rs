//! The Lennard-Jones 12-6 equation of state of M. Thol, G. Rutkai, A. Köster, R. Lustig, R. Span
//! and J. Vrabec, "Equation of State for the Lennard-Jones Fluid", J. Phys. Chem. Ref. Data 45,
//! 023101 (2016): the full (untruncated) potential, reduced units (ε, σ, k_B = 1).
//!
//! The equation gives the reduced residual Helmholtz energy α_r(τ, δ) = a_res / (k_B T) with
//! τ = T_c/T and δ = ρ/ρ_c, as 6 polynomial, 6 exponential and 11 Gaussian bell-shaped terms:
//!
//! ```text
//! α_r = Σ_{i=1..6}   n_i δ^d_i τ^t_i
//!     + Σ_{i=7..12}  n_i δ^d_i τ^t_i exp(-δ^l_i)
//!     + Σ_{i=13..23} n_i δ^d_i τ^t_i exp(-η_i (δ - ε_i)² - β_i (τ - γ_i)²)
//! ```
//!
//! The coefficients are those of the paper, as carried by teqp 0.23.2 (model
//! "LJ126_TholJPCRD2016"; read from the installed package's `get_meta()`). Note for term 21
//! (the narrow Gaussian with β = 383): n = -9.9218575. An older revision of teqp's source
//! (`include/teqp/models/mie/lennardjones.hpp`) printed it as -0.99218575e-1; teqp 0.23.2 and
//! other independent codings of the equation use -0.99218575e+1, and with the e-1 value the
//! pressure near τ ≈ 1.1 differs from teqp 0.23.2 by a few parts in 10⁹.
//!
//! Derivatives are analytic, term by term: each term is `n δ^d τ^t exp(g(δ) + h(τ))`, so
//! δ ∂/∂δ multiplies it by `d + δ g'(δ)` and τ ∂/∂τ by `t + τ h'(τ)`; the second density
//! derivative (for the spinodals) is written out in [`Eos::derivatives`]. Checked against teqp's
//! automatic differentiation in `tests/lj_eos_thol.rs` to round-off.
//!
//! Saturation ([`Eos::saturation`]) is solved from the equation itself (equal pressure and equal
//! chemical potential of the two phases), not from the paper's ancillary equations: the
//! spinodals bracket the densities, a bisection in pressure finds the equal-chemical-potential
//! pressure, and Newton steps in the two densities polish it.

/// Critical temperature T_c* of the equation (its reducing temperature).
pub const T_C: f64 = 1.32;
/// Critical density ρ_c* of the equation (its reducing density).
pub const RHO_C: f64 = 0.31;

/// Lowest temperature of the validated range: 0.5 T_c (Thol et al. 2016, abstract: "valid for
/// temperatures 0.5 < T/T_c < 7 and pressures up to p/p_c = 500"); the triple point is at 0.661.
pub const T_MIN_VALID: f64 = 0.5 * T_C;
/// Highest temperature of the validated range: 7 T_c (same source).
pub const T_MAX_VALID: f64 = 7.0 * T_C;
/// Highest pressure of the validated range, as a multiple of the critical pressure (same source).
pub const P_MAX_VALID_OVER_PC: f64 = 500.0;

/// Largest temperature the functions accept at all (the formula is finite far beyond the
/// validated range; states between [`T_MAX_VALID`] and this are classified as outside it).
pub const T_INPUT_MAX: f64 = 1000.0;
/// Largest density the functions accept at all (well above the fluid; the solid starts near 1).
pub const RHO_INPUT_MAX: f64 = 2.0;

/// A refused input: the field, its value and the allowed range.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum EosError {
    /// A temperature or density outside what the functions accept.
    #[error("{field}: {value} is out of range; allowed: {allowed}")]
    OutOfRange {
        /// "temperature" or "density".
        field: &'static str,
        /// The value given (reduced units).
        value: f64,
        /// The allowed range, in words.
        allowed: String,
    },
    /// No vapour-liquid equilibrium at this temperature.
    #[error("temperature: {value} has no vapour-liquid equilibrium in this equation; allowed: {allowed}")]
    NoSaturation {
        /// The temperature given.
        value: f64,
        /// The range where saturation is solved.
        allowed: String,
    },
}

/// Polynomial (l = 0) and exponential (l > 0) terms: n, t, d, l.
const POWER: [(f64, f64, f64, f64); 12] = [
    (0.520_807_30e-2, 1.000, 4.0, 0.0),
    (0.218_625_20e1, 0.320, 1.0, 0.0),
    (-0.216_101_60e1, 0.505, 1.0, 0.0),
    (0.145_270_00e1, 0.672, 2.0, 0.0),
    (-0.204_179_20e1, 0.843, 2.0, 0.0),
    (0.186_952_86, 0.898, 3.0, 0.0),
    (-0.620_862_50, 1.205, 1.0, 1.0),
    (-0.568_839_00, 1.786, 1.0, 2.0),
    (-0.800_559_22, 2.770, 3.0, 2.0),
    (0.109_014_31, 1.786, 2.0, 1.0),
    (-0.497_456_10, 2.590, 2.0, 2.0),
    (-0.909_884_45e-1, 1.294, 5.0, 1.0),
];

/// Gaussian bell-shaped terms: n, t, d, η, β, γ, ε.
const GAUSS: [(f64, f64, f64, f64, f64, f64, f64); 11] = [
    (-0.146_671_77e1, 2.830, 1.0, 2.067, 0.625, 0.71, 0.2053),
    (0.189_146_90e1, 2.548, 1.0, 1.522, 0.638, 0.86, 0.409),
    (-0.138_370_10, 4.650, 2.0, 8.82, 3.91, 1.94, 0.6),
    (-0.386_964_50, 1.385, 3.0, 1.722, 0.156, 1.48, 1.203),
    (0.126_570_20, 1.460, 3.0, 0.679, 0.157, 1.49, 1.829),
    (0.605_781_00, 1.351, 2.0, 1.883, 0.153, 1.945, 1.397),
    (0.117_918_90e1, 0.660, 1.0, 3.925, 1.16, 3.02, 1.39),
    (-0.477_326_79, 1.496, 2.0, 2.461, 1.73, 1.11, 0.539),
    (-0.992_185_75e1, 1.830, 3.0, 28.2, 383.0, 1.17, 0.934),
    (-0.574_793_20, 1.616, 1.0, 0.753, 0.112, 1.33, 2.369),
    (0.377_292_30e-2, 4.970, 1.0, 0.82, 0.119, 0.24, 2.43),
];

/// α_r and the derivatives the properties need, at one (τ, δ).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Derivatives {
    /// α_r.
    pub alpha: f64,
    /// δ ∂α_r/∂δ.
    pub d_delta: f64,
    /// δ² ∂²α_r/∂δ².
    pub d2_delta: f64,
    /// τ ∂α_r/∂τ.
    pub d_tau: f64,
}

/// Thermodynamic properties at one temperature and density (reduced units).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Properties {
    /// T*.
    pub temperature: f64,
    /// ρ*.
    pub density: f64,
    /// p* = ρ T (1 + δ ∂α_r/∂δ).
    pub pressure: f64,
    /// Z = p / (ρ T).
    pub compressibility_factor: f64,
    /// Residual internal energy per atom u_res* = T τ ∂α_r/∂τ.
    pub residual_energy: f64,
    /// Residual chemical potential at fixed T and ρ, μ_res* = T (α_r + δ ∂α_r/∂δ).
    pub residual_chemical_potential: f64,
    /// Residual Helmholtz energy per atom over T, α_r.
    pub alpha_r: f64,
}

/// Saturated densities and pressure at one temperature.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Saturation {
    /// T*.
    pub temperature: f64,
    /// Saturated liquid density ρ'*.
    pub liquid_density: f64,
    /// Saturated vapour density ρ''*.
    pub vapour_density: f64,
    /// Vapour pressure p_s*.
    pub pressure: f64,
}

/// Where a state lies in the phase diagram of the equation.
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum Region {
    /// Below T_c, less dense than the saturated vapour.
    Vapour,
    /// Below T_c, denser than the saturated liquid.
    Liquid,
    /// At or above T_c.
    Supercritical,
    /// Below T_c, between the saturated densities: a homogeneous state there is not stable.
    TwoPhase,
    /// Outside the temperatures or pressures the equation was validated for.
    OutsideValidatedRange,
}

impl Region {
    /// The word for people and JSON: "vapour", "liquid", "supercritical", "two-phase",
    /// "outside the validated range".
    pub fn word(self) -> &'static str {
        match self {
            Region::Vapour => "vapour",
            Region::Liquid => "liquid",
            Region::Supercritical => "supercritical",
            Region::TwoPhase => "two-phase",
            Region::OutsideValidatedRange => "outside the validated range",
        }
    }
}

/// The equation of state (no state; a namespace for its functions).
#[derive(Clone, Copy, Debug, Default)]
pub struct Eos;

/// Highest temperature where [`Eos::saturation`] is attempted: just below T_c, where the two
/// saturated densities are still resolved by the spinodal scan.
pub const T_SAT_MAX: f64 = 1.319;

/// Density grid of the spinodal scan.
const SCAN_POINTS: usize = 4000;
const SCAN_MAX: f64 = 1.2;

impl Eos {
    /// α_r and its derivatives at τ = T_c/T, δ = ρ/ρ_c (no range checks; δ > 0, τ > 0).
    pub fn derivatives(tau: f64, delta: f64) -> Derivatives {
        let mut r = Derivatives {
            alpha: 0.0,
            d_delta: 0.0,
            d2_delta: 0.0,
            d_tau: 0.0,
        };
        let ln_d = delta.ln();
        let ln_t = tau.ln();
        for &(n, t, d, l) in &POWER {
            let dl = if l > 0.0 { delta.powf(l) } else { 0.0 };
            let term = n * (d * ln_d + t * ln_t - dl).exp();
            // δ ∂/∂δ of ln(term) and δ² of its second derivative.
            let f = d - l * dl;
            r.alpha += term;
            r.d_delta += term * f;
            r.d2_delta += term * (f * f - d - l * (l - 1.0) * dl);
            r.d_tau += term * t;
        }
        for &(n, t, d, eta, beta, gamma, eps) in &GAUSS {
            let x = delta - eps;
            let y = tau - gamma;
            let term = n * (d * ln_d + t * ln_t - eta * x * x - beta * y * y).exp();
            let f = d - 2.0 * eta * delta * x;
            r.alpha += term;
            r.d_delta += term * f;
            r.d2_delta += term * (f * f - d - 2.0 * eta * delta * delta);
            r.d_tau += term * (t - 2.0 * beta * tau * y);
        }
        r
    }

    /// Checks a temperature and density against what the functions accept.
    pub fn check_input(temperature: f64, density: f64) -> Result<(), EosError> {
        if !(temperature.is_finite() && temperature > 0.0 && temperature <= T_INPUT_MAX) {
            return Err(EosError::OutOfRange {
                field: "temperature",
                value: temperature,
                allowed: format!("above 0 and at most {T_INPUT_MAX} (reduced)"),
            });
        }
        if !(density.is_finite() && density > 0.0 && density <= RHO_INPUT_MAX) {
            return Err(EosError::OutOfRange {
                field: "density",
                value: density,
                allowed: format!("above 0 and at most {RHO_INPUT_MAX} (reduced)"),
            });
        }
        Ok(())
    }

    /// Properties at T*, ρ*.
    pub fn properties(temperature: f64, density: f64) -> Result<Properties, EosError> {
        Self::check_input(temperature, density)?;
        Ok(Self::properties_unchecked(temperature, density))
    }

    fn properties_unchecked(temperature: f64, density: f64) -> Properties {
        let d = Self::derivatives(T_C / temperature, density / RHO_C);
        let z = 1.0 + d.d_delta;
        Properties {
            temperature,
            density,
            pressure: density * temperature * z,
            compressibility_factor: z,
            residual_energy: temperature * d.d_tau,
            residual_chemical_potential: temperature * (d.alpha + d.d_delta),
            alpha_r: d.alpha,
        }
    }

    /// p* (no range checks).
    fn pressure(t: f64, rho: f64) -> f64 {
        rho * t * (1.0 + Self::derivatives(T_C / t, rho / RHO_C).d_delta)
    }

    /// ∂p*/∂ρ* at fixed T = T (1 + 2 δ α_δ + δ² α_δδ) (no range checks).
    fn dp_drho(t: f64, rho: f64) -> f64 {
        let d = Self::derivatives(T_C / t, rho / RHO_C);
        t * (1.0 + 2.0 * d.d_delta + d.d2_delta)
    }

    /// Chemical potential over T up to a function of T alone: ln ρ + α_r + δ α_δ.
    fn mu_over_t(t: f64, rho: f64) -> f64 {
        let d = Self::derivatives(T_C / t, rho / RHO_C);
        rho.ln() + d.alpha + d.d_delta
    }

    /// The critical pressure of the equation at its reducing point, p(T_c, ρ_c) (≈ 0.13).
    pub fn critical_pressure() -> f64 {
        Self::pressure(T_C, RHO_C)
    }

    /// Highest pressure of the validated range, 500 p_c.
    pub fn max_valid_pressure() -> f64 {
        P_MAX_VALID_OVER_PC * Self::critical_pressure()
    }

    /// Saturated liquid and vapour densities at T*, from T_MIN_VALID to [`T_SAT_MAX`].
    pub fn saturation(temperature: f64) -> Result<Saturation, EosError> {
        let t = temperature;
        let refuse = || EosError::NoSaturation {
            value: t,
            allowed: format!("{T_MIN_VALID} to {T_SAT_MAX} (reduced)"),
        };
        if !(t.is_finite() && (T_MIN_VALID..=T_SAT_MAX).contains(&t)) {
            return Err(refuse());
        }
        // Spinodals: the first local maximum of p(ρ) from the dilute side and the first local
        // minimum from the dense side.
        let step = SCAN_MAX / SCAN_POINTS as f64;
        let grid = |i: usize| step * i as f64;
        let slope = |rho: f64| Self::dp_drho(t, rho);
        let vap_cell = (1..SCAN_POINTS)
            .find(|&i| slope(grid(i + 1)) <= 0.0)
            .ok_or_else(refuse)?;
        let liq_cell = (1..SCAN_POINTS)
            .rev()
            .find(|&i| slope(grid(i)) <= 0.0)
            .ok_or_else(refuse)?;
        let root = |mut lo: f64, mut hi: f64, f: &dyn Fn(f64) -> f64| {
            let f_lo = f(lo);
            for _ in 0..200 {
                let mid = 0.5 * (lo + hi);
                if mid <= lo || mid >= hi {
                    break;
                }
                if (f(mid) > 0.0) == (f_lo > 0.0) {
                    lo = mid;
                } else {
                    hi = mid;
                }
            }
            0.5 * (lo + hi)
        };
        let rho_sv = root(grid(vap_cell), grid(vap_cell + 1), &slope);
        let rho_sl = root(grid(liq_cell), grid(liq_cell + 1), &slope);
        if rho_sl <= rho_sv {
            return Err(refuse());
        }
        let p_hi = Self::pressure(t, rho_sv);
        let p_lo = Self::pressure(t, rho_sl).max(1e-12);
        if p_hi.is_nan() || p_hi <= p_lo || Self::pressure(t, SCAN_MAX) <= p_hi {
            return Err(refuse());
        }
        let vapour_at = |p: f64| {
            root((0.1 * p / t).min(0.5 * rho_sv), rho_sv, &|r| {
                Self::pressure(t, r) - p
            })
        };
        let liquid_at = |p: f64| root(rho_sl, SCAN_MAX, &|r| Self::pressure(t, r) - p);
        let gap = |p: f64| Self::mu_over_t(t, liquid_at(p)) - Self::mu_over_t(t, vapour_at(p));
        let p = root(p_lo, p_hi, &gap);
        let (mut rl, mut rv) = (liquid_at(p), vapour_at(p));
        // Newton polish on F = (p_l - p_v, μ_l/T - μ_v/T); ∂(μ/T)/∂ρ = (∂p/∂ρ) / (ρ T).
        let residual = |rl: f64, rv: f64| {
            (
                Self::pressure(t, rl) - Self::pressure(t, rv),
                Self::mu_over_t(t, rl) - Self::mu_over_t(t, rv),
            )
        };
        for _ in 0..4 {
            let (f1, f2) = residual(rl, rv);
            let (al, av) = (Self::dp_drho(t, rl), Self::dp_drho(t, rv));
            let (bl, bv) = (al / (rl * t), av / (rv * t));
            let det = -al * bv + av * bl;
            if det == 0.0 || !det.is_finite() {
                break;
            }
            let dl = (-f1 * -bv - -av * -f2) / det;
            let dv = (al * -f2 - bl * -f1) / det;
            let (nl, nv) = (rl + dl, rv + dv);
            let (g1, g2) = residual(nl, nv);
            if !(nl > nv && nv > 0.0) || g1.abs() + g2.abs() >= f1.abs() + f2.abs() {
                break;
            }
            (rl, rv) = (nl, nv);
        }
        Ok(Saturation {
            temperature: t,
            liquid_density: rl,
            vapour_density: rv,
            pressure: 0.5 * (Self::pressure(t, rl) + Self::pressure(t, rv)),
        })
    }

    /// The region of T*, ρ*: outside the validated range (T outside 0.5–7 T_c or p above
    /// 500 p_c, Thol et al. 2016), supercritical at or above T_c, else vapour, two-phase or liquid
    /// by the saturated densities. Between [`T_SAT_MAX`] and T_c, where saturation is not
    /// solved, states are vapour below ρ_c and liquid from it. The equation describes the fluid
    /// only: a state in the solid region (dense, below the melting line) is not detected and is
    /// classified as liquid or supercritical.
    pub fn region(temperature: f64, density: f64) -> Result<Region, EosError> {
        let props = Self::properties(temperature, density)?;
        let t = temperature;
        if !(T_MIN_VALID..=T_MAX_VALID).contains(&t) || props.pressure > Self::max_valid_pressure() {
            return Ok(Region::OutsideValidatedRange);
        }
        if t >= T_C {
            return Ok(Region::Supercritical);
        }
        Ok(match Self::saturation(t) {
            Ok(s) if density < s.vapour_density => Region::Vapour,
            Ok(s) if density > s.liquid_density => Region::Liquid,
            Ok(_) => Region::TwoPhase,
            Err(_) if density < RHO_C => Region::Vapour,
            Err(_) => Region::Liquid,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Analytic derivatives against central differences of α_r.
    #[test]
    fn lj_eos_derivatives_match_differences() {
        for &(tau, delta) in &[(0.66, 1.0), (1.0, 1.0), (1.5, 2.5), (0.3, 0.05), (1.9, 2.8)] {
            let d = Eos::derivatives(tau, delta);
            let h = 1e-5;
            let a = |t: f64, x: f64| Eos::derivatives(t, x).alpha;
            let dd = delta * (a(tau, delta + h) - a(tau, delta - h)) / (2.0 * h);
            let dt = tau * (a(tau + h, delta) - a(tau - h, delta)) / (2.0 * h);
            let h2 = 1e-3;
            let dd2 = delta * delta * (a(tau, delta + h2) - 2.0 * d.alpha + a(tau, delta - h2)) / (h2 * h2);
            assert!(
                (d.d_delta - dd).abs() < 1e-8,
                "{tau} {delta}: {} vs {dd}",
                d.d_delta
            );
            assert!((d.d_tau - dt).abs() < 1e-8, "{tau} {delta}: {} vs {dt}", d.d_tau);
            assert!(
                (d.d2_delta - dd2).abs() < 1e-4 * d.d2_delta.abs().max(1.0),
                "{tau} {delta}: {} vs {dd2}",
                d.d2_delta
            );
        }
    }

    #[test]
    fn lj_eos_ideal_gas_limit() {
        let p = Eos::properties(2.0, 1e-9).unwrap();
        assert!((p.compressibility_factor - 1.0).abs() < 1e-8);
    }

    #[test]
    fn lj_eos_refuses_bad_input_with_range() {
        let e = Eos::properties(-1.0, 0.5).unwrap_err();
        assert!(e.to_string().contains("temperature: -1"), "{e}");
        assert!(e.to_string().contains("allowed"), "{e}");
        let e = Eos::properties(1.0, f64::NAN).unwrap_err();
        assert!(e.to_string().contains("density"), "{e}");
        assert!(Eos::saturation(1.4).is_err());
    }

    #[test]
    fn lj_eos_saturation_is_an_equilibrium() {
        let s = Eos::saturation(1.0).unwrap();
        let pl = Eos::pressure(1.0, s.liquid_density);
        let pv = Eos::pressure(1.0, s.vapour_density);
        assert!((pl - pv).abs() < 1e-12, "{pl} {pv}");
        let g = Eos::mu_over_t(1.0, s.liquid_density) - Eos::mu_over_t(1.0, s.vapour_density);
        assert!(g.abs() < 1e-12, "{g}");
    }
}
