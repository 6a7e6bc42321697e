//! The demo recipes shipped in `mixtures/`, built into the binary. They are orders of an
//! invented laboratory (Ferncastle gas standards lab) for invented customers.

/// (library name, file text) of each demo recipe.
pub const RECIPES: &[(&str, &str)] = &[
    ("flue-gas-span", include_str!("../../mixtures/flue-gas-span.ron")),
    ("nox-span-premix", include_str!("../../mixtures/nox-span-premix.ron")),
    ("pipeline-ng-9", include_str!("../../mixtures/pipeline-ng-9.ron")),
    ("fuel-cell-h2-he", include_str!("../../mixtures/fuel-cell-h2-he.ron")),
    ("lpg-in-methane", include_str!("../../mixtures/lpg-in-methane.ron")),
    ("detector-test-ch4-air", include_str!("../../mixtures/detector-test-ch4-air.ron")),
    ("laser-co2-he-n2", include_str!("../../mixtures/laser-co2-he-n2.ron")),
];

/// The text of a demo recipe by name.
pub fn find(name: &str) -> Option<&'static str> {
    RECIPES.iter().find(|(n, _)| *n == name).map(|(_, t)| *t)
}
