//! Each model's density error against the reference at 15 °C, 1 to 200 bar (CO2, Xe, SF6
//! below their vapour pressures): GERG-2008 (through the `aga8` crate) where it covers the
//! gas, else the multi-fluid model (the gas's reference equation of state, checked against
//! CoolProp in tests/multifluid.rs). The bands are the largest |error| measured over the
//! pressures of each gas; they are pinned here to ±0.05 percentage points so that a
//! change in any model or constant shows. The README shows the full table
//! (`cargo run --example density_table`).

use fillwright::gas::Catalogue;
use fillwright::thermo::survey::{compared, density_deviations, GASES, MODELS};
use fillwright::thermo::Model;

/// Largest |ρ_model/ρ_reference − 1| in %, for ideal, vdw, rk, srk, pr (measured
/// 2026-12-01; the gases GERG-2008 lacks 2026-12-02).
#[allow(clippy::approx_constant)] // measured percentages (SF6 vdw: 6.28), not 2π
const BANDS: &[(&str, [f64; 5])] = &[
    ("N2", [4.78, 5.40, 2.41, 2.01, 2.80]),
    ("CH4", [21.02, 5.31, 2.43, 4.41, 2.86]),
    ("CO2", [28.22, 7.03, 2.15, 1.00, 1.85]),
    ("Ar", [6.64, 4.56, 0.27, 2.40, 2.64]),
    ("He", [9.65, 7.88, 3.51, 0.58, 3.59]),
    ("H2", [12.64, 3.04, 0.67, 0.57, 4.05]),
    ("air-like", [2.22, 5.24, 1.84, 2.37, 2.57]),
    ("natural-gas-like", [26.24, 5.45, 2.74, 4.59, 2.93]),
    ("Ne", [9.94, 1.68, 2.05, 0.60, 2.37]),
    ("Kr", [30.48, 4.57, 4.44, 5.47, 3.11]),
    ("Xe", [29.63, 4.30, 0.25, 0.25, 3.41]),
    ("SF6", [22.97, 6.28, 1.82, 0.50, 1.60]),
    ("SF6 1 % in N2", [4.43, 5.51, 2.53, 1.94, 2.94]),
    ("Xe 2 % in He", [10.39, 7.33, 2.99, 0.58, 4.79]),
    ("SO2 500 ppm in N2", [4.74, 5.40, 2.40, 2.01, 2.79]),
    ("NO 50 ppm in N2", [4.78, 5.40, 2.41, 2.00, 2.80]),
];

#[test]
fn density_error_bands_against_the_reference() {
    let catalogue = Catalogue::built_in();
    let devs = density_deviations(&catalogue);
    let reference_of = |gas: &str| devs.iter().find(|d| d.gas == gas).map(|d| d.reference).unwrap();
    let expected_points: usize = GASES.iter().map(|g| g.2.len() * compared(reference_of(g.0)).len()).sum();
    assert_eq!(devs.len(), expected_points, "every gas, pressure and model was computed");
    assert_eq!(BANDS.len(), GASES.len());
    for (gas, bands) in BANDS {
        for (model, band) in MODELS.iter().zip(bands) {
            let worst =
                devs.iter().filter(|d| d.gas == *gas && d.model == *model).map(|d| d.percent.abs()).fold(0.0, f64::max);
            assert!((worst - band).abs() < 0.05, "{gas} {model}: worst {worst:.3} % vs pinned {band} %");
        }
        // Where GERG-2008 is the reference, the multi-fluid model (other reference equations
        // of the same gases, GERG-2008's binary parameters) stays within 0.06 % of it.
        if reference_of(gas) == Model::Gerg {
            let worst = devs
                .iter()
                .filter(|d| d.gas == *gas && d.model == Model::Multi)
                .map(|d| d.percent.abs())
                .fold(0.0, f64::max);
            assert!(worst < 0.06, "{gas}: multi {worst:.3} % from GERG-2008");
        } else {
            assert_eq!(reference_of(gas), Model::Multi, "{gas}");
        }
    }
}

#[test]
fn ideal_gas_error_is_z_minus_one() {
    // Nitrogen at 15 °C and 200 bar has Z ≈ 1.048 (DOMAIN.md); the ideal density is off by Z − 1.
    let catalogue = Catalogue::built_in();
    let devs = density_deviations(&catalogue);
    let d = devs.iter().find(|d| d.gas == "N2" && d.pressure_bar == 200.0 && d.model.key() == "ideal").unwrap();
    assert!((d.percent - 4.8).abs() < 0.1, "{}", d.percent);
    // Methane at 15 °C and 200 bar has Z ≈ 0.80 (DOMAIN.md).
    let d = devs.iter().find(|d| d.gas == "CH4" && d.pressure_bar == 200.0 && d.model.key() == "ideal").unwrap();
    assert!((d.percent - (0.80 / 1.0 - 1.0) * 100.0).abs() < 1.0, "{}", d.percent);
}
