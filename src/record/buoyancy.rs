//! Air buoyancy of the weighings. A scale adjusted with weights of density 8000 kg/m³
//! reads, for a cylinder of outer volume V in air of density ρa, the conventional mass W;
//! the mass is m = W·(1 − ρa/ρ_ref) + ρa·V (OIML R 111-1; the form the record's contract
//! fixes). Between two weighings the cylinder's own buoyancy does not cancel when the air
//! changes: (ρa₂ − ρa₁)·V, about 0.16 g for a 13.6 L cylinder and a 1 % change of the air.
//!
//! The air density is the CIPM-2007 equation for moist air (Picard, Davis, Gläser and
//! Fujii, Metrologia 45 (2008) 149–155), from the air's temperature, pressure and relative
//! humidity, with 0.0004 mol/mol CO2.

/// Density of the weights the scale is adjusted with, kg/m³ (conventional mass, OIML D 28).
pub const REFERENCE_DENSITY: f64 = 8000.0;

/// Relative standard uncertainty of the CIPM-2007 equation itself, 22 × 10⁻⁶ (Picard et al.
/// 2008, from memory of the paper's uncertainty table).
pub const FORMULA_U_REL: f64 = 22e-6;

/// Default standard uncertainties of the air readings: temperature 0.5 K (common practice
/// for a room thermometer beside a cylinder balance, no source), pressure 50 Pa and
/// relative humidity 5 % (NPL's "routine" figures, "How is air density determined?").
pub const DEFAULT_U_TEMPERATURE_K: f64 = 0.5;
pub const DEFAULT_U_PRESSURE_PA: f64 = 50.0;
pub const DEFAULT_U_HUMIDITY: f64 = 0.05;

/// Default relative standard uncertainty of a cylinder's outer volume: 1 % (common
/// practice for a volume from the drawing's dimensions, no source).
pub const DEFAULT_U_VOLUME_REL: f64 = 0.01;

/// The air at a weighing: temperature K, pressure Pa, relative humidity (fraction).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Air {
    pub temperature_k: f64,
    pub pressure_pa: f64,
    pub humidity: f64,
}

/// The density of moist air by CIPM-2007, kg/m³, with x_CO2 = 0.0004.
pub fn density(air: &Air) -> f64 {
    let (t_k, p, h) = (air.temperature_k, air.pressure_pa, air.humidity);
    let t = t_k - 273.15;
    // Saturation vapour pressure, Pa, and enhancement factor.
    let (a, b, c, d) = (1.237_884_7e-5, -1.912_131_6e-2, 33.937_110_47, -6.343_164_5e3);
    let p_sv = (a * t_k * t_k + b * t_k + c + d / t_k).exp();
    let f = 1.00062 + 3.14e-8 * p + 5.6e-7 * t * t;
    let x_v = h * f * p_sv / p;
    // Compressibility factor.
    let (a0, a1, a2) = (1.58123e-6, -2.9331e-8, 1.1043e-10);
    let (b0, b1, c0, c1) = (5.707e-6, -2.051e-8, 1.9898e-4, -2.376e-6);
    let (dd, e) = (1.83e-11, -0.765e-8);
    let z = 1.0 - p / t_k * (a0 + a1 * t + a2 * t * t + (b0 + b1 * t) * x_v + (c0 + c1 * t) * x_v * x_v)
        + (p / t_k).powi(2) * (dd + e * x_v * x_v);
    // Molar masses of dry air (x_CO2 = 0.0004) and water, kg/mol; R of CIPM-2007.
    let m_a = 28.965_46e-3;
    let m_v = 18.015_28e-3;
    let r = 8.314_472;
    p * m_a / (z * r * t_k) * (1.0 - x_v * (1.0 - m_v / m_a))
}

/// The density and its standard uncertainty from the readings' uncertainties
/// (`u` = (temperature K, pressure Pa, humidity)) and the equation's own: sensitivities by
/// central differences.
pub fn density_with_u(air: &Air, u: (f64, f64, f64)) -> (f64, f64) {
    let rho = density(air);
    let partial =
        |shift: &dyn Fn(f64) -> Air, step: f64| (density(&shift(step)) - density(&shift(-step))) / (2.0 * step);
    let d_t = partial(&|s| Air { temperature_k: air.temperature_k + s, ..*air }, 1e-3);
    let d_p = partial(&|s| Air { pressure_pa: air.pressure_pa + s, ..*air }, 1.0);
    let d_h = partial(&|s| Air { humidity: air.humidity + s, ..*air }, 1e-4);
    let u2 = (d_t * u.0).powi(2) + (d_p * u.1).powi(2) + (d_h * u.2).powi(2) + (FORMULA_U_REL * rho).powi(2);
    (rho, u2.sqrt())
}

/// The OIML R 111-1 approximation of the air density, kg/m³ (its annex E, stated to within
/// 2 × 10⁻⁴ relative for 900–1100 hPa, 10–30 °C and up to 80 % humidity): a check on
/// [`density`].
pub fn oiml_approximation(air: &Air) -> f64 {
    let (p_hpa, t, h_percent) = (air.pressure_pa / 100.0, air.temperature_k - 273.15, air.humidity * 100.0);
    (0.34848 * p_hpa - 0.009 * h_percent * (0.061 * t).exp()) / (273.15 + t)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cipm_2007_agrees_with_the_oiml_approximation_within_its_stated_2e_4() {
        for (t_c, p_hpa, h) in [(20.0, 1013.25, 0.5), (18.0, 950.0, 0.3), (25.0, 1040.0, 0.7), (15.0, 1000.0, 0.1)] {
            let air = Air { temperature_k: t_c + 273.15, pressure_pa: p_hpa * 100.0, humidity: h };
            let (cipm, oiml) = (density(&air), oiml_approximation(&air));
            assert!((cipm / oiml - 1.0).abs() < 2e-4, "{t_c} °C {p_hpa} hPa {h}: {cipm} vs {oiml}");
        }
    }

    #[test]
    fn cipm_2007_agrees_with_an_independent_humid_air_model() {
        // CoolProp 8.0.0 (PyPI), HAPropsSI("Vha", "T", T, "P", p, "R", h): the humid-air
        // model of ASHRAE RP-1485 (Herrmann, Kretzschmar and Gatley), density 1/Vha in
        // kg/m³. It is a different equation from CIPM-2007 (its own dry-air composition),
        // so the two agree to a few 1e-5, twice CIPM-2007's own 22e-6 standard uncertainty.
        for (t_c, p, h, coolprop) in [
            (20.0, 101_325.0, 0.5, 1.199_359_276_772_361_8),
            (18.0, 95_000.0, 0.3, 1.134_362_963_656_197_2),
            (25.0, 104_000.0, 0.7, 1.205_851_632_310_762_2),
            (15.0, 100_000.0, 0.1, 1.208_755_370_328_413_7),
        ] {
            let rho = density(&Air { temperature_k: t_c + 273.15, pressure_pa: p, humidity: h });
            assert!((rho / coolprop - 1.0).abs() < 6e-5, "{t_c} °C {p} Pa {h}: {rho} vs {coolprop}");
        }
    }

    #[test]
    fn a_drier_warmer_thinner_air_is_lighter() {
        let base = Air { temperature_k: 293.15, pressure_pa: 101_325.0, humidity: 0.5 };
        let rho = density(&base);
        assert!(density(&Air { temperature_k: 294.15, ..base }) < rho);
        assert!(density(&Air { pressure_pa: 100_000.0, ..base }) < rho);
        // Water vapour is lighter than air: more humidity, less density.
        assert!(density(&Air { humidity: 0.8, ..base }) < rho);
        let (_, u) = density_with_u(&base, (0.5, 50.0, 0.05));
        // About 0.2 % for 0.5 K: dominated by the temperature.
        assert!(u > 1.5e-3 && u < 3e-3, "{u}");
    }
}
