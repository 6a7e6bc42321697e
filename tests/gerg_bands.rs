//! Each model's density error against GERG-2008 (through the `aga8` crate) at 15 °C,
//! 1 to 200 bar (CO2: 1 to 40 bar, below its 50.9 bar vapour pressure). The bands are the
//! largest |error| measured over the pressures of each gas; they are pinned here to
//! ±0.05 percentage points so that a change in any model or constant shows. The README
//! shows the full table (`cargo run --example density_table`).

use fillwright::gas::Catalogue;
use fillwright::thermo::survey::{density_deviations, GASES, MODELS};

/// Largest |ρ_model/ρ_GERG − 1| in %, for ideal, vdw, rk, srk, pr (measured 2026-12-01).
const BANDS: &[(&str, [f64; 5])] = &[
    ("N2", [4.78, 5.40, 2.41, 2.01, 2.80]),
    ("CH4", [21.02, 5.31, 2.43, 4.41, 2.86]),
    ("CO2", [28.22, 7.04, 2.15, 1.00, 1.85]),
    ("Ar", [6.64, 4.56, 0.27, 2.40, 2.64]),
    ("He", [9.65, 7.88, 3.51, 0.58, 3.59]),
    ("H2", [12.64, 3.04, 0.67, 0.57, 4.05]),
    ("air-like", [2.22, 5.24, 1.84, 2.37, 2.57]),
    ("natural-gas-like", [26.24, 5.45, 2.74, 4.59, 2.93]),
];

#[test]
fn density_error_bands_against_gerg_2008() {
    let catalogue = Catalogue::built_in();
    let devs = density_deviations(&catalogue);
    let expected_points: usize = GASES.iter().map(|g| g.2.len()).sum::<usize>() * MODELS.len();
    assert_eq!(devs.len(), expected_points, "every gas, pressure and model was computed");
    for (gas, bands) in BANDS {
        for (model, band) in MODELS.iter().zip(bands) {
            let worst =
                devs.iter().filter(|d| d.gas == *gas && d.model == *model).map(|d| d.percent.abs()).fold(0.0, f64::max);
            assert!((worst - band).abs() < 0.05, "{gas} {model}: worst {worst:.3} % vs pinned {band} %");
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
