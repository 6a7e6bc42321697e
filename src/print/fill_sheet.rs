//! The fill sheet as text, 80 columns wide: what `fillwright plan` prints, the screen writes
//! for the bench folder and the PDF sets. A pure function of the plan: the command line and
//! the screen both call it.

use crate::gas::Catalogue;
use crate::plan::{self, Plan, Resolutions, StepFlag};
use crate::recipe::Order;
use crate::ron_format::clip;
use crate::thermo::MAX_PRESSURE_PA;
use crate::units::{self, litres, Shown, Sig};

type Lines = Vec<String>;

/// The text fill sheet, 80 columns wide.
pub fn fill_sheet(
    plan: &Plan,
    order: &Order,
    catalogue: &Catalogue,
    res: &Resolutions,
    ambient_pa: f64,
    d: &Shown,
) -> String {
    let mut o: Lines = Vec::new();
    header(&mut o, plan, order, ambient_pa, d);
    steps(&mut o, plan, order, ambient_pa, d);
    legends(&mut o, plan, res, d);
    components(&mut o, plan, order, catalogue, d);
    blend(&mut o, plan, ambient_pa, d);
    every_model(&mut o, plan, d);
    following(&mut o, plan, catalogue);
    closing(&mut o, plan, order, d);
    let mut text = o.join("\n");
    text.push('\n');
    text
}

/// The banner at the top of a sheet whose plan is at stop.
pub fn stop_banner(message: &str) -> String {
    let mut o = String::new();
    o.push_str(&format!("{}\n", "!".repeat(78)));
    o.push_str("!! STOP - DO NOT FILL AS PLANNED\n");
    for line in crate::ron_format::wrap_words(message, 72) {
        o.push_str(&format!("!! {line}\n"));
    }
    o.push_str("!! Lower the fill, or use a cylinder rated for it (see its markings).\n");
    o.push_str(&format!("{}\n\n", "!".repeat(78)));
    o
}

/// The banner for every stop finding of a plan: each stop's reason, then what to do.
pub fn stop_banner_for(stops: &[&crate::checks::Check]) -> String {
    let mut o = String::new();
    o.push_str(&format!("{}\n", "!".repeat(78)));
    o.push_str("!! STOP - DO NOT FILL AS PLANNED\n");
    for stop in stops {
        for line in crate::ron_format::wrap_words(&format!("{} ({})", stop.message, stop.id), 72) {
            o.push_str(&format!("!! {line}\n"));
        }
    }
    if stops.iter().any(|c| c.id == "pressure-rating") {
        o.push_str("!! Lower the fill, or use a cylinder rated for it (see its markings).\n");
    }
    o.push_str("!! Change what is stopped; `fillwright check` gives every figure.\n");
    o.push_str(&format!("{}\n\n", "!".repeat(78)));
    o
}

fn id(catalogue: &Catalogue, g: usize) -> &str {
    catalogue.gas(g).id()
}

/// A target as the recipe gives it: `500 ppm`, `bal. 84.95 %`.
pub fn share_text(order: &Order, g: usize, x: f64) -> String {
    match order.targets.iter().find(|t| t.gas == g).map(|t| t.share) {
        Some(crate::mixture::Share::Of { value, unit }) => format!("{value} {}", unit.suffix()).trim_end().to_string(),
        Some(crate::mixture::Share::Balance) => format!("bal. {} %", Sig(x * 100.0, 4)),
        None => "from sources".into(),
    }
}

/// Name, order, cylinder, fill and model.
fn header(o: &mut Lines, plan: &Plan, order: &Order, ambient_pa: f64, d: &Shown) {
    let mut line = |s: String| o.push(s);
    let t = &plan.totals;
    line(format!("FILL SHEET  {}", order.name));
    let mut ids = Vec::new();
    if !order.order.is_empty() {
        ids.push(format!("order {}", order.order));
    }
    if let Some(serial) = &order.serial {
        ids.push(format!("cylinder {serial}"));
    }
    if !ids.is_empty() {
        line(ids.join(" | "));
    }
    let mut who = vec![format!("{} L water capacity", Sig(litres(order.volume_m3), 4))];
    if order.working_pressure_pa < MAX_PRESSURE_PA {
        who.push(format!("working {} {}", Sig(d.p(order.working_pressure_pa), 4), d.pu()));
    }
    if order.test_pressure_pa < MAX_PRESSURE_PA {
        who.push(format!("test {} {}", Sig(d.p(order.test_pressure_pa), 4), d.pu()));
    }
    line(who.join(" | "));
    line(format!(
        "fill to {} {} at {} | readings for {} | ambient {} {}",
        d.pf(t.pressure_pa),
        d.pu(),
        d.tf(t.temperature_k),
        d.tf(plan.fill_temperature_k),
        Sig(d.p(ambient_pa), 6),
        d.pu()
    ));
    line(format!("model {} ({})", plan.model.title(), plan.model.key()));
    line(String::new());
}

/// The steps: what to add and where to stop, the heel first where there is one.
fn steps(o: &mut Lines, plan: &Plan, order: &Order, ambient_pa: f64, d: &Shown) {
    let mut line = |s: String| o.push(s);
    let scale_from = match order.tare_g {
        Some(g) => format!("scale from tare {:.1} g", g),
        None => "scale net of the cylinder".into(),
    };
    if plan.by_mass {
        line("LIQUEFIED-GAS FILL  the blend is liquid or two-phase at the reference".into());
        line("  temperature: fill by mass, stopping each addition at its scale reading. The".into());
        line("  gauge shows the vapour pressure and cannot be used to stop. Leave vapour".into());
        line("  space: a cylinder full of liquid bursts when it warms. Follow the fill ratio".into());
        line("  on the cylinder's markings and local codes.".into());
        line(String::new());
        line(format!("STEPS  stop each addition at the scale reading; {scale_from}"));
    } else {
        line(format!("STEPS  stop each addition at the pressure reading; {scale_from}"));
    }
    line(format!(
        "{:>2}  {:<14}{:>9}{:>9}{:>11}{:>10}{:>10}{:>8}",
        "#",
        "source",
        "add mol",
        "add g",
        "scale g",
        format!("stop {}", d.pu()),
        "gauge",
        format!("+{}", d.pu())
    ));
    if let Some(h) = &plan.heel {
        // Row 0: what the cylinder holds before the first addition, as the gauge and scale show it.
        line(format!(
            "{:>2}  {:<14}{:>9}{:>9}{:>11.1}{:>10}{:>10}{:>8}",
            0,
            "heel (start)",
            Sig(h.amounts_mol.iter().sum(), 4).to_string(),
            Sig(h.mass_g, 4).to_string(),
            h.scale_reading_g,
            d.pf(h.pressure_at_fill_pa),
            d.pf(h.pressure_at_fill_pa - ambient_pa),
            ""
        ));
    }
    for (i, s) in plan.steps.iter().enumerate() {
        let marks: String = s
            .flags
            .iter()
            .map(|f| match f {
                StepFlag::BelowGaugeResolution => '!',
                StepFlag::BelowScaleResolution => '*',
                StepFlag::AboveDewPoint if s.liquid_at_fill => 'L',
                StepFlag::AboveDewPoint | StepFlag::CondensesIfCooled => 'c',
            })
            .collect();
        line(format!(
            "{:>2}  {:<14}{}{}{:>11.1}{:>10}{:>10}{:>8} {}",
            i + 1,
            clip(&s.source, 14),
            units::cell(s.add_amount_mol, 4, 9),
            units::cell(s.add_mass_g, 4, 9),
            s.scale_reading_g,
            d.pf(s.pressure_after_pa),
            d.pf(s.pressure_after_pa - ambient_pa),
            d.pf(s.increment_pa),
            marks
        ));
    }
}

/// What the marks of the steps mean.
fn legends(o: &mut Lines, plan: &Plan, res: &Resolutions, d: &Shown) {
    let mut line = |s: String| o.push(s);
    if plan.steps.iter().any(|s| s.flags.contains(&StepFlag::BelowGaugeResolution)) {
        line(format!("    ! increment below the gauge resolution ({} {})", Sig(d.p(res.gauge_pa), 3), d.pu()));
    }
    if plan.steps.iter().any(|s| s.flags.contains(&StepFlag::BelowScaleResolution)) {
        line(format!("    * mass below the scale resolution ({} g)", Sig(res.scale_g, 3)));
    }
    if plan.steps.iter().any(|s| s.liquid_at_fill) {
        for text in [
            "    L liquid forms from what is in the cylinder after this step at the fill",
            "      temperature: the gauge shows the vapour pressure and cannot be used to",
            "      stop. Instead: a smaller share of that gas, a warmer fill, another fill",
            "      order (the condensable gas into the balance gas), or fill by mass.",
        ] {
            line(text.into());
        }
    }
    let last = plan.steps.len().saturating_sub(1);
    let cooled = |i: usize, s: &plan::Step| {
        !s.liquid_at_fill
            && (s.flags.contains(&StepFlag::CondensesIfCooled)
                || (i == last && s.flags.contains(&StepFlag::AboveDewPoint)))
    };
    if plan.steps.iter().enumerate().any(|(i, s)| cooled(i, s)) {
        line("    c gas at the fill temperature, but liquid forms on cooling to the lowest".into());
        line("      storage temperature (less the condensation margin). After the last step".into());
        line("      that is the finished blend: lower the fill (`fillwright check` gives the".into());
        line("      highest fill). After an earlier one: fill in one session, warm.".into());
    }
    line(String::new());
}

/// The components at the reference temperature, and Dalton's rule failing.
fn components(o: &mut Lines, plan: &Plan, order: &Order, catalogue: &Catalogue, d: &Shown) {
    let mut line = |s: String| o.push(s);
    let t = &plan.totals;
    line(format!("COMPONENTS  at {}", d.tf(t.temperature_k)));
    line(format!(
        "{:<9}{:>15}{:>11}{:>11}{:>11}{:>12}",
        "gas",
        "target",
        "mol",
        "g",
        format!("x·P {}", d.pu()),
        format!("alone {}", d.pu())
    ));
    for c in &plan.components {
        line(format!(
            "{:<9}{:>15}{:>11}{:>11}{:>11.4}{:>12}",
            id(catalogue, c.gas),
            clip(&share_text(order, c.gas, c.mole_fraction), 15),
            Sig(c.amount_mol, 5).to_string(),
            Sig(c.mass_g, 5).to_string(),
            d.p(c.partial_pressure_pa),
            c.alone_pressure_pa.map_or("–".to_string(), |p| format!("{:.4}", d.p(p)))
        ));
    }
    let sum_alone: Option<f64> = plan.components.iter().map(|c| c.alone_pressure_pa).sum();
    if let Some(sum) = sum_alone {
        line(format!(
            "  the pressures alone add up to {} {u}, not {} {u}:",
            d.pf(sum),
            d.pf(t.pressure_pa),
            u = d.pu()
        ));
        line("  at cylinder pressures Dalton's rule of additive pressures does not hold".into());
    }
    line(String::new());
}

/// The blend's totals.
fn blend(o: &mut Lines, plan: &Plan, ambient_pa: f64, d: &Shown) {
    let mut line = |s: String| o.push(s);
    let t = &plan.totals;
    line("BLEND".into());
    line(format!(
        "  {} {u} at {} ({} {u} gauge), {} mol, {} g",
        d.pf(t.pressure_pa),
        d.tf(t.temperature_k),
        d.pf(t.pressure_pa - ambient_pa),
        Sig(t.amount_mol, 6),
        Sig(t.mass_g, 6),
        u = d.pu()
    ));
    line(format!(
        "  Z {:.5}, density {} g/L, {} m³ of gas at 15 °C and 101.325 kPa",
        t.z,
        Sig(t.density_g_per_l, 5),
        Sig(t.volume_at_reference_m3, 4)
    ));
    line(String::new());
}

/// Every model's stop readings, amount and Z.
fn every_model(o: &mut Lines, plan: &Plan, d: &Shown) {
    let mut line = |s: String| o.push(s);
    let models: Vec<_> = plan.models.iter().filter(|m| m.result.is_ok()).collect();
    line(format!("EVERY MODEL  stop readings at {}, {}", d.tf(plan.fill_temperature_k), d.pu()));
    let mut head = format!("{:<17}", "step");
    for m in &models {
        head.push_str(&format!("{:>9}", m.model.key()));
    }
    line(head);
    for (i, s) in plan.steps.iter().enumerate() {
        let mut row = format!("{:<17}", clip(&format!("{} {}", i + 1, s.source), 17));
        for m in &models {
            let p = m.result.as_ref().ok().and_then(|f| f.step_pressures_pa.get(i)).copied().unwrap_or(f64::NAN);
            row.push_str(&units::cell(d.p(p), 5, 9));
        }
        line(row);
    }
    let mut row = format!("{:<17}", "amount mol");
    for m in &models {
        row.push_str(&units::cell(m.result.as_ref().map_or(f64::NAN, |f| f.amount_mol), 5, 9));
    }
    line(row);
    let mut row = format!("{:<17}", "Z");
    for m in &models {
        row.push_str(&format!("{:>9.4}", m.result.as_ref().map_or(f64::NAN, |f| f.z)));
    }
    line(row);
    for m in plan.models.iter().filter(|m| m.result.is_err()) {
        // The reason only, without the advice after the semicolon, to keep within 80 columns.
        let reason = m.result.as_ref().err().map_or("", |e| e.split(';').next().unwrap_or(e));
        line(clip(&format!("  {}: {reason}", m.model.key()), 80));
    }
    line(String::new());
}

/// The composition error of stopping at each model's readings.
fn following(o: &mut Lines, plan: &Plan, catalogue: &Catalogue) {
    let mut line = |s: String| o.push(s);
    for f in &plan.following {
        line(format!("STOPPING AT EACH MODEL'S READINGS  composition error in % (gas as {} says)", f.truth.key()));
        let mut head = format!("{:<17}", "gas");
        for r in &f.rows {
            head.push_str(&format!("{:>9}", r.targets_of.key()));
        }
        line(head);
        for (i, &g) in plan.gases.iter().enumerate() {
            if plan.components[i].mole_fraction == 0.0 {
                continue;
            }
            let mut row = format!("{:<17}", id(catalogue, g));
            for r in &f.rows {
                let mark = if r.out_of_tolerance[i] { "!" } else { " " };
                // Rounding noise of an exact match reads as 0.00, not -0.00.
                let e = r.relative_error_percent[i];
                let e = if e.abs() < 0.005 { 0.0 } else { e };
                row.push_str(&format!("{:>8}{mark}", crate::units::signed(e, 2)));
            }
            line(row);
        }
        if f.rows.iter().any(|r| r.out_of_tolerance.iter().any(|b| *b)) {
            line("  ! outside the recipe's tolerance".into());
        }
        line(String::new());
    }
}

/// Premixes proposed, notes and the caution.
fn closing(o: &mut Lines, plan: &Plan, order: &Order, d: &Shown) {
    let mut line = |s: String| o.push(s);
    for p in &plan.premixes {
        for text in crate::plan::premix::describe(p, &plan.steps[p.step].source, order.volume_m3, d) {
            line(text);
        }
        line(String::new());
    }

    for n in &plan.notes {
        for (k, part) in crate::ron_format::wrap_words(n, 74).into_iter().enumerate() {
            line(format!("{}{part}", if k == 0 { "NOTE  " } else { "      " }));
        }
    }
    for text in [
        "CAUTION  A computation aid only. Compressed gases are hazardous: check the",
        "  cylinder's markings, valve and test date; follow local codes and licensed",
        "  practice; fill slowly (the cylinder warms as it fills) and never above its",
        "  working pressure.",
    ] {
        line(text.into());
    }
}

/// The printed sheet's form for the bench: a row per step with room to write by hand what
/// the scale and the gauge read, the cylinder's temperature, the time and who did it, the
/// planned figures beside (80 columns).
pub fn bench_form(plan: &Plan, d: &Shown) -> String {
    let mut out = String::from("\nREADINGS AT THE BENCH  written by hand as the fill goes\n");
    out.push_str(&format!(
        "{:<3}{:<11}{:>11}{:>10}  {:<11}{:<10}{:<8}{:<7}{}\n",
        "#",
        "source",
        "scale g",
        format!("stop {}", d.pu()),
        "scale read",
        "gauge",
        "temp",
        "time",
        "by"
    ));
    out.push_str(&format!("{:<3}{:<11}{:>11}{:>10}  {}\n", 0, "empty", "", "", "__________ "));
    for (i, s) in plan.steps.iter().enumerate() {
        out.push_str(&format!(
            "{:<3}{:<11}{:>11.2}{:>10}  {:<11}{:<10}{:<8}{:<7}{}\n",
            i + 1,
            crate::ron_format::clip(&s.source, 10),
            s.scale_reading_g,
            d.pf(s.pressure_after_pa),
            "__________",
            "________",
            "______",
            "_____",
            "___"
        ));
    }
    out
}

/// The cautions for the blend, for the printed sheet.
pub fn cautions(list: &[&str]) -> String {
    let mut out = String::from("\nCAUTIONS\n");
    for c in list {
        for (k, l) in crate::ron_format::wrap_words(c, 76).iter().enumerate() {
            out.push_str(if k == 0 { "- " } else { "  " });
            out.push_str(l);
            out.push('\n');
        }
    }
    out
}
