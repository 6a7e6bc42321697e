//! Helpers shared by the integration tests.

/// Recipe text for an order given as gases and mole fractions (the last gas is the
/// balance), in a cylinder rated well above the fill.
pub fn recipe_text(
    label: &str,
    ids: &[String],
    x: &[f64],
    volume_l: f64,
    pressure_bar: f64,
    t_ref_k: f64,
    t_fill_k: f64,
) -> String {
    let n = ids.len();
    let components: Vec<String> = ids
        .iter()
        .zip(x)
        .enumerate()
        .map(|(i, (id, x))| {
            let amount = if i == n - 1 { "balance".to_string() } else { x.to_string() };
            format!("(gas: \"{id}\", amount: \"{amount}\")")
        })
        .collect();
    format!(
        "Recipe(format: 1, name: \"{label}\", components: [{}], cylinder: (water_capacity: \"{volume_l}L\", \
         working_pressure: \"300bar\", test_pressure: \"450bar\"), fill: Pressure(\"{pressure_bar}bar\"), \
         reference_temperature: \"{t_ref_k}K\", fill_temperature: \"{t_fill_k}K\")",
        components.join(", ")
    )
}
