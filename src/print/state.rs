//! A solved gas state as text (the state, its phase, every other model's answer) and JSON.
//! Pure: the command line prints what these return.

use serde_json::json;

use crate::state::{Given, Solved, Unknown};
use crate::thermo::phases::Phase;
use crate::thermo::{Model, ThermoError};
use crate::units::{bar, litres, Shown, Sig};

/// The solved state and every other model's answer to the same question, with the blend's
/// reference model.
pub struct Answers<'a> {
    pub unknown: Unknown,
    pub chosen: &'a Solved,
    pub others: &'a [(Model, Result<Solved, ThermoError>)],
    pub reference: Model,
}

/// What the reference equations of the blend find where the chosen model finds no liquid:
/// the reference model and its phase (liquid or two-phase). None where they agree that
/// there is no liquid, or where the chosen model is the reference.
pub fn reference_phase(
    chosen: &Solved,
    others: &[(Model, Result<Solved, ThermoError>)],
    reference: Model,
) -> Option<(Model, Phase)> {
    let condensed = |p: Phase| matches!(p, Phase::Liquid | Phase::TwoPhase);
    if chosen.model == reference || condensed(chosen.phase) {
        return None;
    }
    let (_, r) = others.iter().find(|(m, _)| *m == reference)?;
    let r = r.as_ref().ok()?;
    condensed(r.phase).then_some((reference, r.phase))
}

/// The JSON key of the one-phase value of the solved quantity.
fn single_phase_key(unknown: Unknown) -> &'static str {
    match unknown {
        Unknown::Pressure => "single_phase_pressure_bar",
        Unknown::Volume => "single_phase_volume_l",
        Unknown::Amount => "single_phase_amount_mol",
    }
}

/// The state as JSON, with every other model's answer for comparison.
pub fn json(given: &Given, a: &Answers, ids: &[&str], x: &[f64]) -> serde_json::Value {
    let Answers { unknown, chosen, others, reference } = *a;
    let comparison: Vec<serde_json::Value> = others
        .iter()
        .map(|(m, r)| match r {
            Ok(s) => json!({
                "model": m.key(),
                "value": si_to_output(unknown, s.value(unknown)),
                "z": s.z,
                "phase": s.phase.key(),
                "difference_percent": percent(s.value(unknown), chosen.value(unknown)),
            }),
            Err(e) => json!({"model": m.key(), "error": e.to_string()}),
        })
        .collect();
    let mut out = json!({
        "model": chosen.model.key(),
        "temperature_k": given.t_k,
        "pressure_bar": bar(chosen.p_pa),
        "volume_l": litres(chosen.volume_m3),
        "amount_mol": chosen.amount_mol,
        "z": chosen.z,
        "mass_g": chosen.mass_g,
        "solved": unknown.name(),
        "phase": chosen.phase.key(),
        "liquid_fraction": chosen.liquid_fraction,
        "liquid_amount_mol": chosen.liquid_fraction * chosen.amount_mol,
        "vapour_amount_mol": (1.0 - chosen.liquid_fraction) * chosen.amount_mol,
        "phase_judged_by": chosen.judged_by.key(),
        "near_condensation": chosen.phase != Phase::Supercritical && chosen.phase != Phase::Gas,
        "liquid_like": chosen.phase == Phase::Liquid,
        "components": ids.iter().zip(x).map(|(id, xi)| json!({"id": id, "mole_fraction": xi})).collect::<Vec<_>>(),
        "comparison": comparison,
        "reference_model": reference.key(),
    });
    if let Some(v) = chosen.single_phase {
        out[single_phase_key(unknown)] = json!(si_to_output(unknown, v));
    }
    if let Some((_, phase)) = reference_phase(chosen, others, reference) {
        out["reference_phase"] = json!(phase.key());
    }
    out
}

/// The solved quantity in the output units: bar, L or mol.
fn si_to_output(unknown: Unknown, v: f64) -> f64 {
    match unknown {
        Unknown::Pressure => bar(v),
        Unknown::Volume => litres(v),
        Unknown::Amount => v,
    }
}

fn percent(value: f64, reference: f64) -> f64 {
    (value / reference - 1.0) * 100.0
}

pub fn text(mix: &str, given: &Given, ambient_pa: f64, a: &Answers, d: &Shown) -> String {
    let (unknown, s) = (a.unknown, a.chosen);
    let mut out = String::new();
    let mark = |u: Unknown| if u == unknown { "  <- solved" } else { "" };
    put!(out, "State of {mix}");
    put!(out, "model: {} ({})", s.model.title(), s.model.key());
    put!(out);
    put!(out, "  temperature  {:>12} {:<4} {:>10} K", Sig(d.t(given.t_k), 5), d.tu(), Sig(given.t_k, 6));
    put!(
        out,
        "  pressure     {:>12} {u:<4} {:>10} {u} gauge{}",
        Sig(d.p(s.p_pa), 6),
        Sig(d.p(s.p_pa - ambient_pa), 6),
        mark(Unknown::Pressure),
        u = d.pu()
    );
    put!(out, "  volume       {:>12} L{}", Sig(litres(s.volume_m3), 6), mark(Unknown::Volume));
    put!(out, "  amount       {:>12} mol{}", Sig(s.amount_mol, 6), mark(Unknown::Amount));
    put!(out, "  mass         {:>12} g", Sig(s.mass_g, 6));
    put!(out, "  Z            {:>12.5}", s.z);
    put!(out, "  density      {:>12} g/L", Sig(s.mass_g / litres(s.volume_m3), 5));
    put!(
        out,
        "  phase        {:>12}{}",
        s.phase.key(),
        if s.judged_by != s.model { format!("  (judged by {})", s.judged_by.key()) } else { String::new() }
    );
    out.push_str(&own_answer_notes(a, d));
    match s.phase {
        Phase::TwoPhase => {
            put!(out);
            put!(
                out,
                "  ! Gas and liquid together: {} mol liquid and {} mol vapour ({:.1} % liquid).",
                Sig(s.liquid_fraction * s.amount_mol, 4),
                Sig((1.0 - s.liquid_fraction) * s.amount_mol, 4),
                s.liquid_fraction * 100.0
            );
            put!(out, "    The pressure is the vapour pressure of the contents: adding gas makes more");
            put!(out, "    liquid, not more pressure.");
        }
        Phase::Liquid => {
            put!(out);
            put!(out, "  ! Liquid: the contents are a liquid at this state, not a gas.");
        }
        Phase::Gas | Phase::Supercritical => {}
    }
    put!(out);
    out.push_str(&comparison(a, d));
    out
}

/// Beside the answer: the model's one-phase value where it splits, and the reference's
/// liquid where the model finds none.
fn own_answer_notes(a: &Answers, d: &Shown) -> String {
    let Answers { unknown, chosen: s, others, reference } = *a;
    let mut out = String::new();
    let shown = |v: f64| match unknown {
        Unknown::Pressure => format!("{} {}", Sig(d.p(v), 6), d.pu()),
        Unknown::Volume => format!("{} L", Sig(litres(v), 6)),
        Unknown::Amount => format!("{} mol", Sig(v, 6)),
    };
    if let Some(v) = s.single_phase {
        put!(out, "  one-phase    {:>12}  ({} as one phase: not stable here)", shown(v), s.model.key());
    }
    if let Some((m, phase)) = reference_phase(s, others, reference) {
        let found = if phase == Phase::Liquid { "liquid" } else { "gas and liquid together" };
        put!(out);
        put!(out, "  ! The reference equations ({}) find {found} here;", m.title());
        if s.model == Model::Ideal {
            put!(out, "    the ideal gas never condenses: its number is for a gas that is not there.");
        } else {
            put!(out, "    {} finds one phase: its number is for contents that are not there.", s.model.title());
        }
    }
    out
}

fn short_reason(e: &ThermoError) -> String {
    match e {
        ThermoError::NotCovered(ids) => format!("does not cover {}", ids.join(", ")),
        other => other.to_string(),
    }
}

/// Every other model's answer to the same question, against the chosen one.
fn comparison(a: &Answers, d: &Shown) -> String {
    let Answers { unknown, chosen: s, others, reference } = *a;
    let mut out = String::new();
    let unit = match unknown {
        Unknown::Pressure => d.pu(),
        Unknown::Volume => "L",
        Unknown::Amount => "mol",
    };
    put!(
        out,
        "  {:<22} {:>12} {:>9} {:>10}  {}",
        "other models",
        format!("{} {unit}", unknown.name()),
        "Z",
        format!("vs {}", s.model.key()),
        "phase"
    );
    for (m, r) in others {
        match r {
            Ok(o) => put!(
                out,
                "  {:<22} {:>12} {:>9} {:>9}%  {}{}",
                m.title(),
                Sig(
                    if unknown == Unknown::Pressure { d.p(o.p_pa) } else { si_to_output(unknown, o.value(unknown)) },
                    6
                )
                .to_string(),
                format!("{:.5}", o.z),
                crate::units::signed(percent(o.value(unknown), s.value(unknown)), 3),
                o.phase.key(),
                if *m == reference { " (reference)" } else { "" }
            ),
            Err(e) => put!(out, "  {:<22} {}", m.title(), short_reason(e)),
        }
    }
    out
}
