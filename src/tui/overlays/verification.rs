//! The verification pane (ISO 6143): the library's verification files, and one file's
//! reference mixtures and sample typed in a table, the fit drawn beside them (responses
//! against contents, the fitted curve, the sample) with the analysed content and the
//! verdict. Every value is written to the file when Enter keeps it (the text it replaces
//! goes to the file's history), so nothing typed is lost.
//!
//! The pane owns its state, its keys and its drawing; the dispatcher only hands it keys
//! while it is open.

use ratatui::layout::{Constraint, Layout, Rect};
use ratatui::style::{Color, Modifier, Style};
use ratatui::symbols::Marker;
use ratatui::text::{Line, Span};
use ratatui::widgets::{Axis, Block, Borders, Chart, Clear, Dataset, GraphType, Paragraph, Wrap};
use ratatui::Frame;
use tui_input::Input;

use crate::tui::context::{input, input_request, Context, Key};
use crate::verification::{self, Function, Report, Standard, Verification};

/// The pane: the list of files, or one file being edited.
#[derive(Debug, Clone)]
pub struct Pane {
    mode: Mode,
    /// What just happened, shown at the pane's foot.
    pub status: String,
}

#[derive(Debug, Clone)]
enum Mode {
    /// The files (name, one-line summary), the selected one, and the text of a new
    /// verification being typed (`RECORD-ID GAS` or `SERIAL GAS`).
    List {
        files: Vec<(String, String)>,
        selected: usize,
        new: Option<Input>,
    },
    Edit(Box<Editing>),
}

/// One verification file on the pane.
#[derive(Debug, Clone)]
pub struct Editing {
    pub name: String,
    pub file: Verification,
    row: usize,
    cell: usize,
    typing: Option<Input>,
    /// The fit and verdict, or why there is none.
    pub outcome: Result<Report, String>,
}

/// The lines of the table.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Row {
    Gas,
    Function,
    Analyser,
    Standard(usize),
    AddStandard,
    Sample,
}

/// The cells of a reference mixture's line and of the sample's.
const STANDARD_CELLS: [&str; 3] = ["name", "content", "response"];
const SAMPLE_CELLS: [&str; 2] = ["prepared", "response"];

/// The keys the pane handles, for its foot line (the same table the help would show).
const LIST_KEYS: &str = "↑↓ choose · Enter open · n new · Esc close";
const EDIT_KEYS: &str = "↑↓ line · ←→ cell · Enter edit/keep · x remove mixture · Esc back";
const TYPING_KEYS: &str = "Enter keep (written at once) · Esc cancel · Ctrl-U clear · Home End";

/// What the dispatcher should do after a key.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum After {
    Stay,
    Close,
}

fn rows(file: &Verification) -> Vec<Row> {
    let mut r = vec![Row::Gas, Row::Function, Row::Analyser];
    r.extend((0..file.standards.len()).map(Row::Standard));
    r.extend([Row::AddStandard, Row::Sample]);
    r
}

fn cells(row: Row) -> usize {
    match row {
        Row::Standard(_) => STANDARD_CELLS.len(),
        Row::Sample => SAMPLE_CELLS.len(),
        _ => 1,
    }
}

/// Open the pane on the library's verification files.
pub fn open(ctx: &Context) -> Pane {
    Pane { mode: list_mode(ctx, None), status: "verification by analysis: n starts one for a record".into() }
}

fn list_mode(ctx: &Context, select: Option<&str>) -> Mode {
    let files: Vec<(String, String)> = ctx
        .library
        .verifications()
        .into_iter()
        .map(|(name, v)| {
            let summary = match v {
                Ok(v) => {
                    let sample =
                        v.sample.record.as_deref().map_or("sample typed in".to_string(), |r| format!("record {r}"));
                    format!("{} {}, {} mixtures, {sample}", v.gas, v.function, v.standards.len())
                }
                Err(e) => format!("cannot be read: {e}"),
            };
            (name, summary)
        })
        .collect();
    let selected = select.and_then(|s| files.iter().position(|(n, _)| n == s)).unwrap_or(0);
    Mode::List { files, selected, new: None }
}

/// Fit and judge the file as it stands.
pub fn evaluate(file: &Verification, ctx: &Context) -> Result<Report, String> {
    let text = file.to_text();
    let lookup = |id: &str, gas: usize| crate::certify::record_content(Some(&ctx.library), &ctx.catalogue, id, gas);
    let checked = file.check(&ctx.catalogue, &lookup, &text, "").map_err(|e| e.message)?;
    verification::verify(&checked).map_err(|e| e.to_string())
}

/// Open one file by name.
pub fn open_file(ctx: &Context, name: &str) -> Result<Editing, String> {
    let (_, _, file) = ctx.library.open_verification(name).map_err(|e| e.to_string())?;
    let outcome = evaluate(&file, ctx);
    Ok(Editing { name: name.to_string(), file, row: 0, cell: 0, typing: None, outcome })
}

/// A new verification from `RECORD-ID GAS` (the sample is that record) or `SERIAL GAS`
/// (the prepared content is typed in later).
pub fn create(ctx: &Context, typed: &str) -> Result<Editing, String> {
    let Some((id, gas)) = typed.trim().split_once(char::is_whitespace).map(|(i, g)| (i, g.trim())) else {
        return Err("type the record id (or cylinder serial) and the gas, e.g. CY-2207-20261204 CO2".into());
    };
    let gas = ctx.catalogue.find(gas).map_err(|e| e.to_string())?;
    let gas_id = ctx.catalogue.gas(gas).id().to_string();
    // A record names the fill (cylinder and date), so a refill never meets the file of the
    // fill before; a serial alone is a cylinder whose prepared content is typed in.
    let record = match ctx.library.open_record(id) {
        Ok(_) => {
            crate::certify::record_content(Some(&ctx.library), &ctx.catalogue, id, gas)?;
            Some(id.to_string())
        }
        Err(_) if id.chars().filter(|c| *c == '-').count() >= 2 && id.ends_with(|c: char| c.is_ascii_digit()) => {
            return Err(format!(
                "no fill record {id} in the library; give a record id as `fillwright records` lists it, or the \
                 cylinder serial to type the prepared content in"
            ));
        }
        Err(_) => None,
    };
    let name = Verification::file_stem(id, &gas_id);
    if let Ok((_, _, existing)) = ctx.library.open_verification(&name) {
        if existing.sample.record == record {
            return open_file(ctx, &name);
        }
        return Err(format!("verifications/{name}.ron exists for another sample; open it from the list"));
    }
    let file = Verification {
        format: verification::FORMAT,
        gas: gas_id,
        analyser: String::new(),
        method: String::new(),
        function: Function::Linear.key().into(),
        standards: Vec::new(),
        sample: verification::Sample { record, ..Default::default() },
        notes: String::new(),
    };
    ctx.library.save_verification(&name, &file).map_err(|e| e.to_string())?;
    let outcome = evaluate(&file, ctx);
    Ok(Editing { name, file, row: 3, cell: 0, typing: None, outcome })
}

/// A key for the pane.
pub fn on_key(pane: &mut Pane, key: Key, ctx: &Context) -> After {
    match &mut pane.mode {
        Mode::List { files, selected, new } => {
            if let Some(text) = new {
                match key {
                    Key::Esc => *new = None,
                    Key::Enter => {
                        let typed = text.value().to_string();
                        match create(ctx, &typed) {
                            Ok(e) => {
                                pane.status = format!("verifications/{}.ron: type the reference mixtures", e.name);
                                pane.mode = Mode::Edit(Box::new(e));
                            }
                            Err(e) => pane.status = e,
                        }
                    }
                    k => {
                        if let Some(r) = input_request(k) {
                            text.handle(r);
                        }
                    }
                }
                return After::Stay;
            }
            match key {
                Key::Esc | Key::Char('q') => return After::Close,
                Key::Up | Key::Char('k') => *selected = selected.saturating_sub(1),
                Key::Down | Key::Char('j') => *selected = (*selected + 1).min(files.len().saturating_sub(1)),
                Key::Char('n') => {
                    *new = Some(input(""));
                    pane.status = "record id (or cylinder serial) and gas, e.g. CY-2207-20261204 CO2".into();
                }
                Key::Enter => match files.get(*selected).map(|(n, _)| n.clone()) {
                    Some(name) => match open_file(ctx, &name) {
                        Ok(e) => pane.mode = Mode::Edit(Box::new(e)),
                        Err(e) => pane.status = e,
                    },
                    None => pane.status = "no verification yet: n starts one".into(),
                },
                _ => {}
            }
            After::Stay
        }
        Mode::Edit(e) => {
            if e.typing.is_some() {
                on_typing(e, key, ctx, &mut pane.status);
                return After::Stay;
            }
            if key == Key::Esc {
                let name = e.name.clone();
                pane.mode = list_mode(ctx, Some(&name));
                return After::Stay;
            }
            on_edit_key(e, key, ctx, &mut pane.status);
            After::Stay
        }
    }
}

fn on_edit_key(e: &mut Editing, key: Key, ctx: &Context, status: &mut String) {
    let all = rows(&e.file);
    let row = all[e.row.min(all.len() - 1)];
    match key {
        Key::Up | Key::Char('k') => e.row = e.row.saturating_sub(1),
        Key::Down | Key::Char('j') => e.row = (e.row + 1).min(all.len() - 1),
        Key::Left | Key::Char('h') => e.cell = e.cell.saturating_sub(1),
        Key::Right | Key::Char('l') => e.cell = (e.cell + 1).min(cells(row) - 1),
        Key::Char('x') | Key::Delete => {
            if let Row::Standard(k) = row {
                let removed = e.file.standards.remove(k);
                save(e, ctx, status, &format!("{} removed (kept in the file's history)", label(&removed, k)));
            }
        }
        Key::Enter | Key::Char('e') => match row {
            Row::Function => {
                let now = Function::parse(&e.file.function).unwrap_or(Function::Linear);
                let at = Function::ALL.iter().position(|f| *f == now).unwrap_or(0);
                e.file.function = Function::ALL[(at + 1) % Function::ALL.len()].key().into();
                let what = format!("function {}", e.file.function);
                save(e, ctx, status, &what);
            }
            Row::AddStandard => {
                let n = e.file.standards.len();
                e.file.standards.push(Standard { name: format!("RM-{}", n + 1), ..Standard::default() });
                e.row = 3 + n;
                e.cell = 1;
                e.typing = Some(input(""));
                *status = "content of the reference mixture with its u, e.g. 9.987%±0.004% (or record:ID)".into();
            }
            _ => {
                e.typing = Some(input(&cell_text(&e.file, row, e.cell)));
                *status = hint(row, e.cell).into();
            }
        },
        _ => {}
    }
    let rows_now = rows(&e.file).len();
    e.row = e.row.min(rows_now - 1);
    e.cell = e.cell.min(cells(rows(&e.file)[e.row]) - 1);
}

fn on_typing(e: &mut Editing, key: Key, ctx: &Context, status: &mut String) {
    let Some(text) = e.typing.as_mut() else { return };
    match key {
        Key::Esc => {
            e.typing = None;
            *status = "not changed".into();
        }
        Key::Enter => {
            let typed = text.value().trim().to_string();
            e.typing = None;
            let row = rows(&e.file)[e.row];
            set_cell(&mut e.file, row, e.cell, &typed);
            save(e, ctx, status, &format!("{} written", hint_name(row, e.cell)));
        }
        k => {
            if let Some(r) = input_request(k) {
                text.handle(r);
            }
        }
    }
}

/// Write the file and judge it again.
fn save(e: &mut Editing, ctx: &Context, status: &mut String, what: &str) {
    match ctx.library.save_verification(&e.name, &e.file) {
        Ok(_) => {
            e.outcome = evaluate(&e.file, ctx);
            *status = match &e.outcome {
                Ok(r) if r.consistent => format!("{what}; consistent"),
                Ok(_) => format!("{what}; NOT CONSISTENT"),
                Err(why) => format!("{what}; {}", first_line(why)),
            };
        }
        Err(err) => *status = format!("NOT WRITTEN: {err}"),
    }
}

fn first_line(s: &str) -> &str {
    s.lines().next().unwrap_or("")
}

fn label(s: &Standard, k: usize) -> String {
    if s.name.is_empty() {
        format!("reference mixture {}", k + 1)
    } else {
        s.name.clone()
    }
}

fn hint_name(row: Row, cell: usize) -> &'static str {
    match row {
        Row::Gas => "gas",
        Row::Function => "function",
        Row::Analyser => "analyser",
        Row::Standard(_) => STANDARD_CELLS[cell.min(2)],
        Row::Sample => SAMPLE_CELLS[cell.min(1)],
        Row::AddStandard => "mixture",
    }
}

fn hint(row: Row, cell: usize) -> &'static str {
    match (row, cell) {
        (Row::Gas, _) => "the gas verified: formula, name or CAS number",
        (Row::Analyser, _) => "the analyser and method (free text)",
        (Row::Standard(_), 0) => "the reference mixture's cylinder or name",
        (Row::Standard(_), 1) => "content with its u (k = 1): 9.987%±0.004%, 500ppm±0.5%rel, or record:ID",
        (Row::Sample, 0) => "prepared content with its u (12.0036%±0.0006%), or record:ID",
        _ => "response with its u (0.99810±0.00030), or repeats: 0.9980, 0.9983, 0.9981",
    }
}

/// The text of a cell as typed in the file.
fn cell_text(file: &Verification, row: Row, cell: usize) -> String {
    let content = |c: &Option<String>, r: &Option<String>| {
        r.as_ref().map(|r| format!("record:{r}")).or_else(|| c.clone()).unwrap_or_default()
    };
    let response = |one: &Option<String>, many: &[String]| one.clone().unwrap_or_else(|| many.join(", "));
    match row {
        Row::Gas => file.gas.clone(),
        Row::Function => file.function.clone(),
        Row::Analyser => file.analyser.clone(),
        Row::Standard(k) => {
            let s = &file.standards[k];
            match cell {
                0 => s.name.clone(),
                1 => content(&s.content, &s.record),
                _ => response(&s.response, &s.responses),
            }
        }
        Row::Sample if cell == 0 => content(&file.sample.prepared, &file.sample.record),
        Row::Sample => response(&file.sample.response, &file.sample.responses),
        Row::AddStandard => String::new(),
    }
}

/// Store a typed cell in the file, as typed (the check judges it).
fn set_cell(file: &mut Verification, row: Row, cell: usize, typed: &str) {
    let split_content = |typed: &str| match typed.strip_prefix("record:") {
        Some(id) => (None, Some(id.trim().to_string())),
        None => (Some(typed.to_string()).filter(|t| !t.is_empty()), None),
    };
    let split_response = |typed: &str| -> (Option<String>, Vec<String>) {
        let parts: Vec<String> =
            typed.split([',', ';', ' ']).map(str::trim).filter(|p| !p.is_empty()).map(String::from).collect();
        if parts.len() > 1 && !typed.contains('±') && !typed.contains("+-") {
            (None, parts)
        } else {
            (Some(typed.to_string()).filter(|t| !t.is_empty()), Vec::new())
        }
    };
    match row {
        Row::Gas => file.gas = typed.to_string(),
        Row::Function => file.function = typed.to_string(),
        Row::Analyser => file.analyser = typed.to_string(),
        Row::Standard(k) => {
            let s = &mut file.standards[k];
            match cell {
                0 => s.name = typed.to_string(),
                1 => (s.content, s.record) = split_content(typed),
                _ => (s.response, s.responses) = split_response(typed),
            }
        }
        Row::Sample if cell == 0 => (file.sample.prepared, file.sample.record) = split_content(typed),
        Row::Sample => (file.sample.response, file.sample.responses) = split_response(typed),
        Row::AddStandard => {}
    }
}

/// The file being edited, if any (for tests and the dispatcher).
pub fn editing(pane: &Pane) -> Option<&Editing> {
    match &pane.mode {
        Mode::Edit(e) => Some(e),
        Mode::List { .. } => None,
    }
}

// Drawing.

fn style(color: bool, c: Color) -> Style {
    if color {
        Style::default().fg(c)
    } else {
        Style::default()
    }
}

/// Draw the pane over `area`.
pub fn draw(pane: &Pane, color: bool, frame: &mut Frame, area: Rect) {
    frame.render_widget(Clear, area);
    let [body, foot] = Layout::vertical([Constraint::Min(1), Constraint::Length(1)]).areas(area);
    let keys = match &pane.mode {
        Mode::List { new: Some(_), .. } => "Enter start · Esc cancel",
        Mode::List { .. } => LIST_KEYS,
        Mode::Edit(e) if e.typing.is_some() => TYPING_KEYS,
        Mode::Edit(_) => EDIT_KEYS,
    };
    let status =
        crate::ron_format::clip(&pane.status, usize::from(area.width).saturating_sub(keys.chars().count() + 3));
    let foot_line = Line::from(vec![
        Span::styled(status, Style::default().add_modifier(Modifier::BOLD)),
        Span::raw(" │ "),
        Span::styled(keys, style(color, Color::DarkGray)),
    ]);
    frame.render_widget(Paragraph::new(foot_line), foot);
    match &pane.mode {
        Mode::List { files, selected, new } => draw_list(files, *selected, new.as_ref(), frame, body),
        Mode::Edit(e) => draw_edit(e, color, frame, body),
    }
}

fn draw_list(files: &[(String, String)], selected: usize, new: Option<&Input>, frame: &mut Frame, area: Rect) {
    let block = Block::default().borders(Borders::ALL).title(" Verification by analysis (ISO 6143) ");
    let inner = block.inner(area);
    frame.render_widget(block, area);
    let width = usize::from(inner.width);
    let mut lines: Vec<Line> = Vec::new();
    if let Some(text) = new {
        lines.push(Line::raw(format!("new: {}▏", text.value())));
        lines.push(Line::raw(""));
    }
    if files.is_empty() {
        lines.push(Line::raw("No verification files yet. n starts one: the record id of the"));
        lines.push(Line::raw("new cylinder (or its serial) and the gas analysed."));
    }
    for (k, (name, summary)) in files.iter().enumerate() {
        let mark = if k == selected { "▶ " } else { "  " };
        let line = crate::ron_format::clip(&format!("{mark}{name:<28} {summary}"), width);
        let s = if k == selected { Style::default().add_modifier(Modifier::REVERSED) } else { Style::default() };
        lines.push(Line::styled(line, s));
    }
    frame.render_widget(Paragraph::new(lines), inner);
}

fn draw_edit(e: &Editing, color: bool, frame: &mut Frame, area: Rect) {
    if area.width >= 100 {
        // Wide: the table on the left, the chart above the verdict on the right.
        let [left, right] = Layout::horizontal([Constraint::Percentage(52), Constraint::Percentage(48)]).areas(area);
        let [chart, results] = Layout::vertical([Constraint::Percentage(55), Constraint::Percentage(45)]).areas(right);
        draw_table(e, frame, left);
        draw_chart(e, color, frame, chart);
        draw_results(e, color, frame, results);
    } else {
        // Narrow: the table above, the verdict beside the chart below.
        let table_rows = rows(&e.file).len() as u16 + 4;
        let [top, bottom] = Layout::vertical([Constraint::Max(table_rows), Constraint::Min(8)]).areas(area);
        let [results, chart] =
            Layout::horizontal([Constraint::Percentage(58), Constraint::Percentage(42)]).areas(bottom);
        draw_table(e, frame, top);
        draw_results(e, color, frame, results);
        draw_chart(e, color, frame, chart);
    }
}

fn draw_table(e: &Editing, frame: &mut Frame, area: Rect) {
    let block = Block::default().borders(Borders::ALL).title(format!(" verifications/{}.ron ", e.name));
    let inner = block.inner(area);
    frame.render_widget(block, area);
    let width = usize::from(inner.width);
    let all = rows(&e.file);
    let sel = Style::default().add_modifier(Modifier::REVERSED);
    let shown = |row: Row, cell: usize| -> String {
        if all.get(e.row) == Some(&row) && e.cell == cell {
            if let Some(t) = &e.typing {
                return format!("{}▏", t.value());
            }
        }
        cell_text(&e.file, row, cell)
    };
    let mut lines: Vec<Line> = Vec::new();
    for (r, &row) in all.iter().enumerate() {
        let here = r == e.row;
        let mark = if here { "▶" } else { " " };
        let cell_style = |c: usize| if here && e.cell == c { sel } else { Style::default() };
        let spans: Vec<Span> = match row {
            Row::Gas | Row::Function | Row::Analyser => {
                vec![Span::raw(format!("{mark} {:<9} ", hint_name(row, 0))), Span::styled(shown(row, 0), cell_style(0))]
            }
            Row::Standard(_) => {
                let w = width.saturating_sub(4) / 3;
                vec![
                    Span::raw(format!("{mark} ")),
                    Span::styled(
                        format!("{:<w$}", crate::ron_format::clip(&shown(row, 0), w.saturating_sub(1))),
                        cell_style(0),
                    ),
                    Span::raw(" "),
                    Span::styled(
                        format!("{:<w$}", crate::ron_format::clip(&shown(row, 1), w.saturating_sub(1))),
                        cell_style(1),
                    ),
                    Span::raw(" "),
                    Span::styled(crate::ron_format::clip(&shown(row, 2), w), cell_style(2)),
                ]
            }
            Row::AddStandard => vec![Span::styled(format!("{mark} + add a reference mixture"), cell_style(0))],
            Row::Sample => vec![
                Span::raw(format!("{mark} sample    ")),
                Span::styled(shown(row, 0), cell_style(0)),
                Span::raw("  response "),
                Span::styled(shown(row, 1), cell_style(1)),
            ],
        };
        if row == Row::Standard(0) {
            lines.push(Line::raw(format!(
                "  {:<w$}{:<w$}response",
                "mixture",
                "content",
                w = width.saturating_sub(4) / 3 + 1
            )));
        }
        if row == Row::Sample {
            lines.push(Line::raw(""));
        }
        lines.push(Line::from(spans));
    }
    frame.render_widget(Paragraph::new(lines), inner);
}

fn draw_results(e: &Editing, color: bool, frame: &mut Frame, area: Rect) {
    let block = Block::default().borders(Borders::ALL).title(" Fit and verdict ");
    let inner = block.inner(area);
    frame.render_widget(block, area);
    let lines: Vec<Line> = match &e.outcome {
        Err(why) => vec![Line::styled("no verdict yet:", style(color, Color::Yellow)), Line::raw(why.clone())],
        Ok(r) => result_lines(r, color),
    };
    frame.render_widget(Paragraph::new(lines).wrap(Wrap { trim: false }), inner);
}

/// The fit and verdict in a few lines.
pub fn result_lines(r: &Report, color: bool) -> Vec<Line<'static>> {
    use crate::verification::present::pair;
    let fit = &r.fit;
    let (ps, pu, unit) = pair(r.checked.prepared.value, r.checked.prepared.u);
    let scale = match unit {
        "ppb" => 1e-9,
        "ppm" => 1e-6,
        _ => 1e-2,
    };
    let digits = ps.split_once('.').map_or(0, |(_, d)| d.len());
    let f = |x: f64| format!("{:.*}", digits, x / scale);
    let goodness = fit.goodness();
    let mut lines = vec![
        Line::raw(format!(
            "{} fit, worst residual {goodness:.2} ({})",
            fit.function.key(),
            if r.adequate() { "adequate" } else { "NOT adequate, above 2" }
        )),
        Line::raw(format!("prepared  {ps} {unit}  u {pu}")),
        Line::raw(format!("analysed  {} {unit}  u {}", f(r.analysed.value), f(r.analysed.u))),
        Line::raw(format!("difference {} {unit}, allowed {}", f(r.difference), f(r.bound))),
    ];
    lines.push(if r.consistent {
        Line::styled("CONSISTENT with the prepared content", style(color, Color::Green))
    } else {
        Line::styled("NOT CONSISTENT: do not certify", style(color, Color::Red).add_modifier(Modifier::BOLD))
    });
    lines.push(Line::raw("weighted residuals (x, y):"));
    for (k, (dx, dy)) in fit.weighted_residuals.iter().enumerate() {
        lines
            .push(Line::raw(format!("  {:<12} {dx:>6.2} {dy:>6.2}", crate::ron_format::clip(&r.checked.names[k], 12))));
    }
    lines
}

fn draw_chart(e: &Editing, color: bool, frame: &mut Frame, area: Rect) {
    let Ok(r) = &e.outcome else {
        let block = Block::default().borders(Borders::ALL).title(" Responses against contents ");
        frame.render_widget(Paragraph::new("the chart shows once the fit is made").block(block), area);
        return;
    };
    let fit = &r.fit;
    let (low, high) = fit.range;
    let (_, _, unit) = crate::verification::present::pair(high, 0.0);
    let scale = match unit {
        "ppb" => 1e-9,
        "ppm" => 1e-6,
        _ => 1e-2,
    };
    let curve: Vec<(f64, f64)> =
        (0..=60).map(|k| low + (high - low) * k as f64 / 60.0).map(|x| (x / scale, fit.response(x))).collect();
    let standards: Vec<(f64, f64)> = r.checked.points.iter().map(|p| (p.x / scale, p.y)).collect();
    let sample = vec![(r.analysed.value / scale, r.checked.response.value)];
    let ys = standards.iter().chain(&curve).map(|p| p.1);
    let (ymin, ymax) = ys.fold((f64::INFINITY, f64::NEG_INFINITY), |a, y| (a.0.min(y), a.1.max(y)));
    let pad_y = ((ymax - ymin) * 0.05).max(1e-12);
    let pad_x = ((high - low) / scale * 0.05).max(1e-12);
    let datasets = vec![
        Dataset::default()
            .name("fit")
            .marker(Marker::Braille)
            .graph_type(GraphType::Line)
            .style(style(color, Color::Cyan))
            .data(&curve),
        Dataset::default()
            .name("mixtures")
            .marker(Marker::Block)
            .graph_type(GraphType::Scatter)
            .style(style(color, Color::Yellow))
            .data(&standards),
        Dataset::default()
            .name("sample")
            .marker(Marker::Dot)
            .graph_type(GraphType::Scatter)
            .style(style(color, Color::Magenta))
            .data(&sample),
    ];
    let (x0, x1) = (low / scale - pad_x, high / scale + pad_x);
    let chart = Chart::new(datasets)
        .legend_position(None)
        .block(
            Block::default()
                .borders(Borders::ALL)
                .title(" Responses against contents ")
                .title_bottom(" ─ fit  █ mixtures  • sample "),
        )
        .x_axis(Axis::default().title(unit).bounds([x0, x1]).labels([format!("{x0:.4}"), format!("{x1:.4}")]))
        .y_axis(
            Axis::default()
                .bounds([ymin - pad_y, ymax + pad_y])
                .labels([format!("{:.4}", ymin - pad_y), format!("{:.4}", ymax + pad_y)]),
        );
    frame.render_widget(chart, area);
}
