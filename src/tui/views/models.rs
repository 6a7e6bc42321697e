//! The Models view: every model's amount, Z and last stop reading side by side, and the
//! charts of Z and of the fill.

use ratatui::layout::{Constraint, Layout, Rect};
use ratatui::style::Color;
use ratatui::symbols::Marker;
use ratatui::text::Line;
use ratatui::widgets::{Axis, Block, Borders, Chart, Dataset, GraphType, Paragraph};
use ratatui::Frame;

use super::Screen;
use crate::ron_format::clip;
use crate::tui::context::{Context, Key};
use crate::tui::model::Model;
use crate::tui::theme::Theme;

/// The models compared.
pub struct Models;

impl Screen for Models {
    fn draw(&self, model: &Model, theme: &Theme, frame: &mut Frame, area: Rect) {
        models(model, theme, frame, area)
    }
    fn on_key(&self, model: &mut Model, key: Key, ctx: &mut Context) {
        let _ = (model, key, ctx);
    }
    fn help(&self) -> &'static [&'static str] {
        &["every model's amount, Z and last stop reading;", "charts of Z and of the fill"]
    }
}

fn models(model: &Model, theme: &Theme, frame: &mut Frame, area: Rect) {
    let Some(doc) = &model.doc else { return };
    let Ok(p) = &doc.computed.plan else {
        frame.render_widget(Paragraph::new("The recipe does not plan yet; see the Recipe view."), area);
        return;
    };
    let max_steps = (area.height as usize).saturating_sub(14).clamp(2, 12);
    let shown = p.steps.len().min(max_steps);
    let table_h = (shown + 6) as u16;
    let follow = match &doc.computed.following {
        Some((ids, following)) => following_lines(ids, following, p, theme),
        None => Vec::new(),
    };
    // The comparison gets what the table and the charts (6 rows at least) leave.
    let room = usize::from(area.height.saturating_sub(table_h + 6));
    let follow_h = if follow.len() > 3 && room > 3 { follow.len().min(room) as u16 } else { 0 };
    let [top, middle, bottom] =
        Layout::vertical([Constraint::Length(table_h), Constraint::Length(follow_h), Constraint::Min(4)]).areas(area);
    table(model, p, shown, theme, frame, top);
    if follow_h > 0 {
        let mut lines = follow;
        if lines.len() > usize::from(follow_h) {
            lines.truncate(usize::from(follow_h) - 1);
            lines.push(Line::styled("… the rest on the printed sheet (p on the Fill sheet)", theme.dim()));
        }
        frame.render_widget(Paragraph::new(lines), middle);
    }
    let [zc, fc] = Layout::horizontal([Constraint::Percentage(50), Constraint::Percentage(50)]).areas(bottom);
    z_chart(model, &doc.computed.z_curves, theme, frame, zc);
    fill_chart(model, p, theme, frame, fc);
}

/// Stopping at each model's readings, as the reference judges it: the composition error in
/// % per gas (the largest first) and per model whose readings are followed; `!` marks one
/// outside the recipe's tolerance.
fn following_lines(
    ids: &[String],
    following: &[crate::plan::Following],
    p: &crate::plan::Plan,
    theme: &Theme,
) -> Vec<Line<'static>> {
    // The last comparison is the reference's (the plan's own model's when it is the reference).
    let Some(f) = following.last() else { return Vec::new() };
    let mut lines = vec![Line::styled(
        format!(" Stopping at each model's readings: composition error in %, as {} says", f.truth.key()),
        theme.bold(),
    )];
    let mut head = format!("{:<14}", "");
    for r in &f.rows {
        head.push_str(&format!("{:>9}", r.targets_of.key()));
    }
    lines.push(Line::styled(head, theme.bold()));
    let mut gases: Vec<usize> = (0..p.gases.len()).filter(|&i| p.components[i].mole_fraction > 0.0).collect();
    let worst = |i: usize| f.rows.iter().map(|r| r.relative_error_percent[i].abs()).fold(0.0, f64::max);
    gases.sort_by(|&a, &b| worst(b).total_cmp(&worst(a)));
    for i in gases {
        let id = ids.get(i).map_or("", String::as_str);
        let mut row = format!("{:<14}", clip(&format!(" {id}"), 13));
        for r in &f.rows {
            let e = r.relative_error_percent[i];
            let e = if e.abs() < 0.005 { 0.0 } else { e };
            let mark = if r.out_of_tolerance[i] { "!" } else { " " };
            row.push_str(&format!("{:>8}{mark}", crate::units::signed(e, 2)));
        }
        lines.push(Line::raw(row));
    }
    lines
}

/// One table: a column per model; the stop reading of each step, then the amount, its
/// difference from the reference, and Z.
fn table(model: &Model, p: &crate::plan::Plan, shown: usize, theme: &Theme, frame: &mut Frame, top: Rect) {
    let ok: Vec<_> = p.models.iter().filter_map(|m| m.result.as_ref().ok().map(|f| (m.model, f))).collect();
    // The reference: GERG-2008 where it covers the blend, else the multi-fluid model.
    use crate::thermo::Model as Eos;
    let reference = [Eos::Gerg, Eos::Multi]
        .iter()
        .find_map(|r| ok.iter().find(|(m, _)| m == r).map(|(m, _)| *m))
        .unwrap_or(p.model);
    let ref_amount = ok.iter().find(|(m, _)| *m == reference).map(|(_, f)| f.amount_mol);
    let block = Block::default().borders(Borders::ALL).title(format!(
        " Every model: stop readings at {} in {}; reference {} ",
        model.shown.tf(p.fill_temperature_k),
        model.shown.pu(),
        reference.key()
    ));
    let inner = block.inner(top);
    frame.render_widget(block, top);
    let mut head = format!("{:<14}", "");
    for (m, _) in &ok {
        let mark = if *m == p.model { "*" } else { "" };
        head.push_str(&format!("{:>9}", format!("{}{mark}", m.key())));
    }
    let mut lines = vec![Line::styled(head, theme.bold())];
    for (i, s) in p.steps.iter().enumerate().take(shown) {
        let mut row = format!("{:<14}", clip(&format!("{} {}", i + 1, s.source), 13));
        for (_, f) in &ok {
            row.push_str(&crate::units::cell(f.step_pressures_pa.get(i).map_or(f64::NAN, |v| model.shown.p(*v)), 5, 9));
        }
        lines.push(Line::raw(row));
    }
    if p.steps.len() > shown {
        lines.push(Line::styled(format!("… {} more steps on the fill sheet", p.steps.len() - shown), theme.dim()));
    }
    let mut amount = format!("{:<14}", "amount mol");
    let mut diff = format!("{:<14}", "vs reference");
    let mut z = format!("{:<14}", "Z");
    for (_, f) in &ok {
        amount.push_str(&crate::units::cell(f.amount_mol, 5, 9));
        diff.push_str(&format!(
            "{:>9}",
            format!("{}%", crate::units::signed(ref_amount.map_or(0.0, |r| (f.amount_mol / r - 1.0) * 100.0), 2))
        ));
        z.push_str(&format!("{:>9.4}", f.z));
    }
    lines.extend([Line::styled(amount, theme.bold()), Line::raw(diff), Line::raw(z)]);
    for m in p.models.iter().filter(|m| m.result.is_err()) {
        let e = m.result.as_ref().err().map_or("", |e| e.split(';').next().unwrap_or(e));
        lines.push(Line::styled(clip(&format!("{}: {e}", m.model.key()), inner.width as usize), theme.dim()));
    }
    frame.render_widget(Paragraph::new(lines), inner);
}

/// Z against pressure, one curve per model: each a line, and a letter on it (`p` for pr, `g`
/// for gerg …) at its own pressure, so that the curves are told apart without colour even
/// where they meet (markers of their own would pile up there).
fn z_chart(
    model: &Model,
    z_curves: &[(crate::thermo::Model, Vec<(f64, f64)>)],
    theme: &Theme,
    frame: &mut Frame,
    zc: Rect,
) {
    let colors = [Color::White, Color::Cyan, Color::Magenta, Color::Yellow, Color::Green, Color::Red, Color::Blue];
    let (mut zmin, mut zmax, mut pmax) = (f64::INFINITY, f64::NEG_INFINITY, 1.0f64);
    // The curves are computed in bar; shown in the settings' unit.
    let curves: Vec<Vec<(f64, f64)>> = z_curves
        .iter()
        .map(|(_, pts)| pts.iter().map(|(p_bar, z)| (model.shown.p(p_bar * 1e5), *z)).collect())
        .collect();
    for pts in &curves {
        for (pp, z) in pts {
            zmin = zmin.min(*z);
            zmax = zmax.max(*z);
            pmax = pmax.max(*pp);
        }
    }
    let labels: Vec<[(f64, f64); 1]> =
        curves.iter().enumerate().map(|(i, pts)| [label_point(pts, i, curves.len(), pmax)]).collect();
    let style = |i: usize| theme.fg(colors[i % colors.len()]);
    // The lines first, the letters over them (a later line would hide an earlier letter).
    let mut datasets: Vec<Dataset> = curves
        .iter()
        .enumerate()
        .map(|(i, pts)| {
            Dataset::default().marker(Marker::Braille).graph_type(GraphType::Line).style(style(i)).data(pts)
        })
        .collect();
    datasets.extend(z_curves.iter().zip(&labels).enumerate().map(|(i, ((m, _), at))| {
        Dataset::default()
            .marker(Marker::Custom(curve_letter(*m)))
            .graph_type(GraphType::Scatter)
            .style(style(i).add_modifier(ratatui::style::Modifier::BOLD))
            .data(at)
    }));
    let pad = ((zmax - zmin) * 0.05).max(0.005);
    let legend: String =
        z_curves.iter().map(|(m, _)| format!("{}={}", curve_letter(*m), m.key())).collect::<Vec<_>>().join(" ");
    let chart = Chart::new(datasets)
        .legend_position(None)
        .block(Block::default().borders(Borders::ALL).title(" Z against pressure ").title_bottom(format!(" {legend} ")))
        .x_axis(
            Axis::default().title(model.shown.pu()).bounds([0.0, pmax]).labels(["0".to_string(), format!("{pmax:.0}")]),
        )
        .y_axis(
            Axis::default()
                .title("Z")
                .bounds([zmin - pad, zmax + pad])
                .labels([format!("{:.2}", zmin - pad), format!("{:.2}", zmax + pad)]),
        );
    frame.render_widget(chart, zc);
}

/// The letter that marks a model's curve on the Z chart: its key's first letter, unique
/// among the models.
pub fn curve_letter(m: crate::thermo::Model) -> char {
    m.key().chars().next().unwrap_or('?')
}

/// Where curve `i` of `n` carries its letter: at its own pressure, spread over the middle
/// 70 % of the axis (so no two letters share a column, whatever the curves do), on the
/// curve (interpolated between its points).
pub fn label_point(pts: &[(f64, f64)], i: usize, n: usize, pmax: f64) -> (f64, f64) {
    let x = pmax * (0.15 + 0.7 * (i as f64 + 0.5) / n.max(1) as f64);
    let z = pts.windows(2).find(|w| w[0].0 <= x && x <= w[1].0).map_or_else(
        || pts.last().map_or(1.0, |p| p.1),
        |w| {
            let t = if w[1].0 > w[0].0 { (x - w[0].0) / (w[1].0 - w[0].0) } else { 0.0 };
            w[0].1 + t * (w[1].1 - w[0].1)
        },
    );
    (x, z)
}

/// The fill: pressure reading against the amount added so far.
fn fill_chart(model: &Model, p: &crate::plan::Plan, theme: &Theme, frame: &mut Frame, fc: Rect) {
    let mut pts = vec![(0.0, 0.0)];
    let mut n = 0.0;
    for s in &p.steps {
        n += s.add_amount_mol;
        pts.push((n, model.shown.p(s.pressure_after_pa)));
    }
    let (nmax, ptop) = pts.iter().fold((0.0f64, 0.0f64), |a, b| (a.0.max(b.0), a.1.max(b.1)));
    let chart = Chart::new(vec![Dataset::default()
        .name(p.model.key())
        .marker(Marker::Braille)
        .graph_type(GraphType::Line)
        .style(theme.fg(Color::Cyan))
        .data(&pts)])
    // One curve, named in the title: no legend box over it.
    .legend_position(None)
    .block(Block::default().borders(Borders::ALL).title(format!(" The fill ({}): reading vs amount ", p.model.key())))
    .x_axis(Axis::default().title("mol").bounds([0.0, nmax.max(1e-9)]).labels(["0".to_string(), format!("{nmax:.1}")]))
    .y_axis(
        Axis::default()
            .title(model.shown.pu())
            .bounds([0.0, ptop.max(1e-9)])
            .labels(["0".to_string(), format!("{ptop:.0}")]),
    );
    frame.render_widget(chart, fc);
}
