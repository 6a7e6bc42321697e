//! All the screen's state in one place. Modes are enums, not flags; everything the views
//! show that needs thermodynamics is computed here ([`Computed`]), never in a view.

use tui_input::Input;

use crate::checks::{self, Check};
use crate::gas::Catalogue;
use crate::library::{Entry, Opened, Revision};
use crate::plan::{self, Plan, PlanOptions};
use crate::recipe::{Fill, Order, Recipe};
use crate::settings::Resolved;
use crate::thermo::{Fluid, Model as Eos};

/// The views of the workspace, in Tab order.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum View {
    Library,
    Editor,
    Sheet,
    Models,
    Checks,
}

impl View {
    pub const ALL: [View; 5] = [View::Library, View::Editor, View::Sheet, View::Models, View::Checks];

    pub fn title(self) -> &'static str {
        match self {
            View::Library => "Library",
            View::Editor => "Recipe",
            View::Sheet => "Fill sheet",
            View::Models => "Models",
            View::Checks => "Screening",
        }
    }
}

/// A question on top of the current view.
#[derive(Debug, Clone)]
pub enum Overlay {
    None,
    Help,
    /// Quit with unsaved changes?
    ConfirmQuit,
    /// Delete this library recipe?
    ConfirmDelete(String),
    /// The file changed on disk since it was opened.
    Conflict,
    /// The plan is at stop: tick its steps anyway? (the finding)
    ConfirmStop(String),
    /// Switch the fill target to the next kind? (what it becomes, in words)
    ConfirmFillKind(String),
    /// The trash: deleted recipes (name, when deleted) and the selected one.
    Trash {
        entries: Vec<(String, String)>,
        selected: usize,
    },
    /// The settings editor: the selected field and the settings as written.
    Settings {
        selected: usize,
        values: Box<crate::settings::Settings>,
    },
    /// The recipe does not validate: save it anyway? (what is wrong, the revision note)
    ConfirmSaveInvalid {
        why: String,
        note: Option<String>,
    },
    /// A line of text for `purpose`.
    Prompt {
        purpose: Prompt,
        input: Input,
    },
    /// Choose a gas: search text and the selected row.
    Picker {
        input: Input,
        selected: usize,
        purpose: PickFor,
    },
    /// Revisions of a recipe, the selected one, the revision marked to compare from (None:
    /// the selected one is compared with the newest), and the changes between them.
    History {
        name: String,
        revisions: Vec<Revision>,
        selected: usize,
        changes: Vec<String>,
        base: Option<u64>,
    },
    /// The premix cascades the plan proposes, the one shown, and the first line shown of
    /// its text (a long cascade scrolls).
    Premixes {
        selected: usize,
        scroll: usize,
    },
    /// The fill records (all, or one recipe's) and the chosen one.
    Records(Box<super::overlays::records::Records>),
    /// Drafts left by a session that ended with unsaved edits.
    Drafts {
        drafts: Vec<super::drafts::DraftEntry>,
        selected: usize,
    },
}

/// What a prompt's text is for.
#[derive(Debug, Clone, PartialEq)]
pub enum Prompt {
    Duplicate(String),
    Rename(String),
    SaveAs,
    SaveNote,
    NewRecipe,
    MeasuredTemperature,
    ActualReading(usize),
    AddSource,
    /// The scale reading of the next weighing of the fill record.
    Weighing,
    /// The serial of the cylinder filled, where the recipe names none (asked before the
    /// record starts).
    CylinderSerial,
    /// The source (analysis or @name) of the step in progress.
    StepSource,
    /// A correction of a recorded entry (`w 2 13450.12g`), then its reason.
    Correction,
    CorrectionReason(String),
    /// Who fills, and the balance used, for the fill record.
    Operator,
    Balance,
    /// The air at the weighing just recorded (index of the weighing), for buoyancy.
    Air(usize),
    /// A value of the settings editor (the field's index).
    Setting(usize),
}

/// What a gas pick does.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum PickFor {
    AddComponent,
    ReplaceComponent(usize),
}

/// One editable line of the recipe editor.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Field {
    Name,
    Description,
    Order,
    Component(usize),
    Tolerance(usize),
    AddComponent,
    WaterCapacity,
    WorkingPressure,
    TestPressure,
    Tare,
    Serial,
    FillKind,
    FillValue,
    ReferenceTemperature,
    FillTemperature,
    Ambient,
    /// What is in the cylinder before the fill (evacuated, or a heel).
    BeforeFill,
    Model,
    Source(usize),
    AddSource,
    FillOrder,
    Notes,
}

/// The fields of a recipe, in screen order.
pub fn fields(r: &Recipe) -> Vec<Field> {
    let mut f = vec![Field::Name, Field::Description, Field::Order];
    for i in 0..r.components.len() {
        f.push(Field::Component(i));
        f.push(Field::Tolerance(i));
    }
    f.push(Field::AddComponent);
    f.extend([
        Field::WaterCapacity,
        Field::WorkingPressure,
        Field::TestPressure,
        Field::Tare,
        Field::Serial,
        Field::FillKind,
        Field::FillValue,
        Field::ReferenceTemperature,
        Field::FillTemperature,
        Field::Ambient,
        Field::BeforeFill,
        Field::Model,
    ]);
    for i in 0..r.sources.len() {
        f.push(Field::Source(i));
    }
    f.extend([Field::AddSource, Field::FillOrder, Field::Notes]);
    f
}

/// What the screen shows that needs computing, recomputed after every edit.
#[derive(Debug, Clone)]
pub struct Computed {
    /// The order read from the recipe, or why it cannot be.
    pub order: Result<Order, String>,
    pub plan: Result<Plan, String>,
    /// Screening results (computed when the recipe plans).
    pub checks: Option<Vec<Check>>,
    /// Z against pressure for every model at the reference temperature: (model, points).
    pub z_curves: Vec<(Eos, Vec<(f64, f64)>)>,
    /// What the plan, the screening and the curves depend on: the recipe without its
    /// names, notes, serial and tare, and the settings. An edit that leaves it unchanged
    /// reuses them.
    pub key: String,
    /// Whether the last update reused them.
    pub reused: bool,
    /// Stopping at each model's readings, judged by the plan's model and the reference:
    /// made when the Models view is shown (the screen's plan leaves it out for speed).
    /// With the plan gases' ids, in the plan's order.
    pub following: Option<(Vec<String>, Vec<crate::plan::Following>)>,
    /// The phases (step flags, the condensation check) are Peng–Robinson's quick estimate,
    /// shown until the reference equations' answer, computed beside, replaces them.
    pub phases_estimated: bool,
}

/// The one-thread pool the screen's estimate runs in: on two cores the whole recompute
/// runs beside it (on the shared pool), and work split across a pool's idle workers costs
/// their spinning as well (docs/speed.md has the figures: less CPU for a little more wall
/// time). The joins inside run one after the other. None where the system gives no thread
/// (the estimate then runs where it is asked for).
fn estimate_pool() -> Option<&'static rayon::ThreadPool> {
    static POOL: std::sync::OnceLock<Option<rayon::ThreadPool>> = std::sync::OnceLock::new();
    POOL.get_or_init(|| {
        rayon::ThreadPoolBuilder::new().num_threads(1).thread_name(|_| "fillwright-estimate".into()).build().ok()
    })
    .as_ref()
}

impl Computed {
    /// The plan options the screen uses: the settings' model, resolutions and storage range.
    /// The screen does not show the comparison of following each model's readings; the
    /// printed sheet makes it ([`super::views::sheet::export`]).
    pub fn options(settings: &Resolved) -> PlanOptions {
        PlanOptions {
            default_model: settings.default_model,
            resolutions: plan::Resolutions {
                gauge_pa: settings.gauge_resolution_pa,
                scale_g: settings.scale_resolution_g,
            },
            min_temperature_k: Some(settings.conditions().judged_down_to_k()),
            skip_following: true,
            stage_steps_only: true,
            ..PlanOptions::default()
        }
    }

    /// Only the screening of a recipe (for the library's column); None where it does not plan.
    pub fn screening_only(recipe: &Recipe, catalogue: &Catalogue, settings: &Resolved) -> Option<Vec<Check>> {
        let order = recipe.resolve(catalogue, "", &recipe.name).ok()?;
        let options = PlanOptions { screening_only: true, ..Self::options(settings) };
        let plan = plan::plan(&order, catalogue, &options).ok()?;
        Some(checks::screen(&plan, &order, catalogue, &settings.conditions()))
    }

    pub fn of(recipe: &Recipe, catalogue: &Catalogue, settings: &Resolved) -> Computed {
        Computed::judged(recipe, catalogue, settings, None)
    }

    /// The results with the phases judged by Peng–Robinson: the quick estimate the screen
    /// shows while the reference equations' answer is computed (marked as an estimate).
    /// Computed on a thread of its own with no other worker (see [`estimate_pool`]).
    pub fn estimate(recipe: &Recipe, catalogue: &Catalogue, settings: &Resolved) -> Computed {
        let run = || Computed::judged(recipe, catalogue, settings, Some(Eos::Pr));
        match estimate_pool() {
            Some(pool) => pool.install(run),
            None => run(),
        }
    }

    fn judged(recipe: &Recipe, catalogue: &Catalogue, settings: &Resolved, judge: Option<Eos>) -> Computed {
        let order = recipe.resolve(catalogue, "", &recipe.name).map_err(|e| in_screen_words(&e.message));
        let options = PlanOptions { phase_judge: judge, ..Self::options(settings) };
        let make_plan = |o: &Order| plan::plan(o, catalogue, &options).map_err(|e| e.to_string());
        let conditions = settings.conditions();
        // On both cores: the charts beside the plan where the fill pressure is known
        // beforehand (else beside the screening, after the plan).
        let (plan, early_curves) = match &order {
            Ok(o) => match o.fill {
                Fill::PressurePa(p) => {
                    let (gases, x) = plan::blend(o);
                    let (plan, z) = rayon::join(|| make_plan(o), || z_curves(&gases, &x, p, o, catalogue));
                    (plan, Some(z))
                }
                _ => (make_plan(o), None),
            },
            Err(e) => (Err(e.clone()), None),
        };
        let (checks, z_curves) = match (&plan, &order, early_curves) {
            (Ok(p), Ok(o), Some(z)) => (Some(checks::screen_judged(p, o, catalogue, &conditions, judge)), z),
            (Ok(p), Ok(o), None) => {
                let (gases, x) = (&p.gases, p.components.iter().map(|c| c.mole_fraction).collect::<Vec<_>>());
                let (c, z) = rayon::join(
                    || checks::screen_judged(p, o, catalogue, &conditions, judge),
                    || z_curves(gases, &x, p.totals.pressure_pa, o, catalogue),
                );
                (Some(c), z)
            }
            _ => (None, Vec::new()),
        };
        let phases_estimated = judge.is_some();
        Computed {
            order,
            plan,
            checks,
            z_curves,
            key: heavy_key(recipe, settings),
            reused: false,
            following: None,
            phases_estimated,
        }
    }

    /// What the heavy results of `recipe` under `settings` depend on (see [`Computed::key`]).
    pub fn key_of(recipe: &Recipe, settings: &Resolved) -> String {
        heavy_key(recipe, settings)
    }

    /// The results for an edited recipe: reused from `previous` when the edit leaves the
    /// heavy results' inputs unchanged (a name, a note, a serial, a tare: the scale
    /// readings then move by the tare's change), else computed afresh.
    pub fn update(previous: &Computed, recipe: &Recipe, catalogue: &Catalogue, settings: &Resolved) -> Computed {
        if previous.key != heavy_key(recipe, settings) {
            return Computed::of(recipe, catalogue, settings);
        }
        let order = recipe.resolve(catalogue, "", &recipe.name).map_err(|e| in_screen_words(&e.message));
        let tare = |o: &Result<Order, String>| o.as_ref().ok().and_then(|o| o.tare_g).unwrap_or(0.0);
        let shift = tare(&order) - tare(&previous.order);
        let mut plan = previous.plan.clone();
        if let Ok(p) = plan.as_mut() {
            for s in p.steps.iter_mut() {
                s.scale_reading_g += shift;
            }
            if let Some(h) = p.heel.as_mut() {
                h.scale_reading_g += shift;
            }
        }
        Computed { order, plan, reused: true, ..previous.clone() }
    }
}

/// The inputs of the heavy results (see [`Computed::key`]).
fn heavy_key(recipe: &Recipe, settings: &Resolved) -> String {
    let light = Recipe {
        name: String::new(),
        description: String::new(),
        order: String::new(),
        notes: String::new(),
        revision: 0,
        saved: None,
        saved_by: None,
        change_note: None,
        cylinder: crate::recipe::CylinderLine { tare: None, serial: None, ..recipe.cylinder.clone() },
        ..recipe.clone()
    };
    format!("{}{settings:?}", crate::recipe::canonical::to_text(&light))
}

/// Z of the finished blend from 1 bar to 1.2 times the fill pressure, for each model.
fn z_curves(gases: &[usize], x: &[f64], fill_pa: f64, o: &Order, catalogue: &Catalogue) -> Vec<(Eos, Vec<(f64, f64)>)> {
    let top = 1.2 * fill_pa / 1e5;
    // The multi-fluid curve only where GERG-2008 does not cover the blend (else it lies on
    // GERG-2008's).
    let gerg_covers = plan::reference_model(gases, catalogue) == Eos::Gerg;
    use rayon::prelude::*;
    Eos::ALL
        .par_iter()
        .filter(|&&m| !(m == Eos::Multi && gerg_covers))
        .filter_map(|&m| {
            let f = Fluid::new(catalogue, gases, m).ok()?;
            let bars: Vec<f64> = (0..=30).map(|k| 1.0 + (top - 1.0) * k as f64 / 30.0).collect();
            let pascals: Vec<f64> = bars.iter().map(|b| b * 1e5).collect();
            let pts: Vec<(f64, f64)> = bars
                .iter()
                .zip(f.isotherm_z(o.reference_temperature_k, &pascals, x))
                .filter_map(|(&b, z)| z.map(|z| (b, z)))
                .collect();
            Some((m, pts))
        })
        .collect()
}

/// What the fill record says so far, and the rest of the fill re-planned from it.
#[derive(Debug, Clone)]
pub struct Progress {
    /// Steps weighed.
    pub weighed: usize,
    /// Per plan gas: its id, the amount in the cylinder now and as planned after as many
    /// steps, mol.
    pub rows: Vec<(String, f64, f64)>,
    /// The remaining steps re-planned (or why not).
    pub replan: Result<crate::plan::replan::Replan, String>,
    /// The record read into numbers (the live sheet is made from it).
    pub standing: crate::bench::Standing,
}

/// The fill as it happens at the bench.
#[derive(Debug, Clone, Default)]
pub struct Bench {
    /// The fill record being written (every entry is saved at once).
    pub record: Option<crate::library::records::OpenedRecord>,
    /// The record so far against the plan.
    pub progress: Option<Progress>,
    /// The source chosen for the step in progress (analysis or @name), else the plan's.
    pub chosen_source: Option<String>,
    pub selected: usize,
    pub done: Vec<bool>,
    /// Cylinder temperature measured now, K.
    pub measured_k: Option<f64>,
    /// Absolute readings reached, Pa, per step.
    pub actual_pa: Vec<Option<f64>>,
    /// The sheet as the fill stands: finished steps as recorded, the rest re-planned, the
    /// stop readings also for `measured_k` (computed in `update`).
    pub live: Vec<crate::bench::LiveStep>,
    /// The stop finding the user chose to fill past (steps of a plan at stop are locked
    /// until the user confirms; a different stop asks again).
    pub stop_accepted: Option<String>,
    /// A weighing far from the plan waiting for the user's confirmation (the text typed).
    pub unconfirmed_weighing: Option<String>,
    /// With no fill in progress: the recipe's last finished fill (its record id).
    pub last_finished: Option<String>,
    /// Per step that doses a premix recipe of the library: where that premix stands (read
    /// with the record).
    pub premix_states: Vec<Option<String>>,
    /// Steps weighed whose recorded source has no uncertainty (a premix at its nominal
    /// composition): the certificate would refuse them (read with the record).
    pub unanalysed: Vec<usize>,
    /// The serial typed for this fill where the recipe names none.
    pub serial: Option<String>,
    /// The record on the sheet (or the last finished one) has a certificate in the library.
    pub certified: bool,
}

impl Bench {
    /// Make the live sheet again (after a new plan, a record entry or a temperature).
    pub fn correct(&mut self, plan: Option<&Plan>) {
        let standing = self.progress.as_ref().map(|p| &p.standing);
        // Before the first addition is weighed the record holds only the empty weight.
        let empty_g =
            self.record.as_ref().and_then(|r| r.record.weighings.first()).and_then(|w| crate::units::grams(w));
        self.live = plan.map(|p| crate::bench::live_sheet(p, standing, empty_g, self.measured_k)).unwrap_or_default();
    }

    /// The stop reading to judge step `k` against: for the temperature measured now where
    /// there is one, else at the fill temperature, from the live sheet.
    pub fn target_pa(&self, k: usize) -> Option<f64> {
        self.live.get(k).and_then(|l| l.pressure_now_pa.or(l.pressure_after_pa))
    }
}

/// The recipe being edited.
#[derive(Debug, Clone)]
pub struct Document {
    /// Library name.
    pub name: String,
    /// What was read from disk (None for a recipe not yet saved).
    pub opened: Option<Opened>,
    pub recipe: Recipe,
    /// The recipe as last saved or opened, to tell unsaved changes.
    pub saved: Recipe,
    pub undo: Vec<Recipe>,
    pub redo: Vec<Recipe>,
    /// Selected editor line.
    pub field: usize,
    /// The line being typed, when editing.
    pub editing: Option<Input>,
    pub computed: Computed,
    pub bench: Bench,
    /// The draft these edits were recovered from (removed once they are saved or dropped).
    pub recovered_draft: Option<std::path::PathBuf>,
    /// The model of the last plan made (an edit that moves the plan to another model says
    /// so, also after edits that left it without a plan for a while).
    pub last_model: Option<Eos>,
}

/// A recipe message in the words of the screen: the file's keys become the editor's labels
/// (`water_capacity` is "water capacity").
pub fn in_screen_words(message: &str) -> String {
    const KEYS: [(&str, &str); 9] = [
        ("water_capacity", "water capacity"),
        ("working_pressure", "working pressure"),
        ("test_pressure", "test pressure"),
        ("reference_temperature", "reference temperature"),
        ("fill_temperature", "fill temperature"),
        ("fill_order", "fill order"),
        ("change_note", "revision note"),
        ("saved_by", "saved by"),
        ("tolerance", "tolerance"),
    ];
    KEYS.iter().fold(message.to_string(), |m, (key, label)| m.replace(key, label))
}

/// The checks' indices worst first (stable within a severity): the Screening view's order.
pub fn checks_worst_first(checks: &[Check]) -> Vec<usize> {
    let mut order: Vec<usize> = (0..checks.len()).collect();
    order.sort_by_key(|&i| std::cmp::Reverse(checks[i].severity));
    order
}

impl Document {
    pub fn dirty(&self) -> bool {
        !crate::recipe::changes::same_content(&self.recipe, &self.saved)
    }

    pub fn current_field(&self) -> Field {
        let f = fields(&self.recipe);
        f[self.field.min(f.len() - 1)]
    }
}

/// The recipes being screened on another thread (see [`LibraryState::pending`]).
pub type Pending = std::collections::HashMap<String, (crate::library::Fingerprint, String)>;

/// The last screening of each library recipe: name → (file fingerprint, settings, worst).
pub type ScreeningCache =
    std::collections::HashMap<String, (crate::library::Fingerprint, String, Option<checks::Severity>)>;

/// The library view's state.
#[derive(Debug, Clone, Default)]
pub struct LibraryState {
    pub entries: Vec<Entry>,
    /// The worst screening result of each entry (None: it does not plan), computed on
    /// both cores when the list is read (on another thread where the screen has one, see
    /// [`LibraryState::pending`]).
    pub screening: Vec<Option<checks::Severity>>,
    /// The recipes being screened on another thread, with the fingerprint of the file
    /// and the settings being screened with: the list shows them as pending until their
    /// result comes.
    pub pending: Pending,
    /// The last screening of each recipe by name, with the fingerprint of the file it was
    /// made from and the settings it was made with: a refresh screens only what changed.
    pub screened: ScreeningCache,
    /// Search text; the list shows only matching recipes.
    pub filter: Option<Input>,
    pub selected: usize,
    /// The library folder, as shown.
    pub label: String,
    /// Recipes with a fill in progress (a record not finished), read with the list.
    pub filling: Vec<String>,
}

impl LibraryState {
    /// Keep entry `i`'s screening (made of the file with fingerprint `fp` under `settings`)
    /// and show it.
    pub fn cache_and_show(
        &mut self,
        i: usize,
        name: String,
        fp: crate::library::Fingerprint,
        settings: String,
        worst: Option<checks::Severity>,
    ) {
        if self.screening.len() < self.entries.len() {
            self.screening.resize(self.entries.len(), None);
        }
        self.screening[i] = worst;
        self.screened.insert(name, (fp, settings, worst));
    }

    /// Indices into `entries` that match the search: every word typed is found in the
    /// name, the title, the order reference, the cylinder serial, the gases, the description
    /// or the notes. Recipes whose name holds every word come first (a name typed whole
    /// is the first line, not a recipe that mentions it).
    pub fn visible(&self) -> Vec<usize> {
        let text = self.filter.as_ref().map(|i| i.value().to_lowercase()).unwrap_or_default();
        let mut found = self.matching(&text);
        let by_name = |i: &usize| {
            let name = self.entries[*i].name.to_lowercase();
            !text.split_whitespace().all(|word| name.contains(word))
        };
        found.sort_by_key(by_name);
        found
    }

    fn matching(&self, text: &str) -> Vec<usize> {
        (0..self.entries.len())
            .filter(|&i| {
                let e = &self.entries[i];
                let mut haystack = e.name.to_lowercase();
                if let Ok(s) = &e.summary {
                    haystack.push(' ');
                    haystack.push_str(&s.brief.title.to_lowercase());
                    haystack.push(' ');
                    haystack.push_str(&s.search_text);
                }
                text.split_whitespace().all(|word| haystack.contains(word))
            })
            .collect()
    }
}

/// The whole screen.
#[derive(Debug, Clone)]
pub struct Model {
    pub view: View,
    pub overlay: Overlay,
    pub library: LibraryState,
    pub doc: Option<Document>,
    /// Selected line of the screening view.
    /// The chosen check of the Screening view, as its index in the screening's own order
    /// (so that the cursor stays on the same check when the list re-sorts).
    /// The check chosen on the Screening view; None: the worst (first shown).
    pub check_selected: Option<usize>,
    /// What just happened, for the status line.
    pub status: String,
    /// Colours on (off for NO_COLOR).
    pub color: bool,
    /// Units of the figures shown (from the settings).
    pub shown: crate::units::Shown,
    /// The service range and gauge resolution the bench readings are judged by (from the
    /// settings).
    pub limits: BenchLimits,
    /// The verification pane, while it is open (it takes every key).
    pub verification: Option<Box<super::overlays::verification::Pane>>,
    pub quit: bool,
}

/// What the Fill sheet judges typed readings against.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BenchLimits {
    /// Lowest storage and highest service temperature, K.
    pub min_k: f64,
    pub max_k: f64,
    /// Gauge resolution, Pa.
    pub gauge_pa: f64,
}

impl Default for BenchLimits {
    fn default() -> BenchLimits {
        let s = crate::settings::Settings::default().resolve("", "defaults");
        s.map_or(BenchLimits { min_k: 273.15, max_k: 338.15, gauge_pa: 0.1e5 }, |s| BenchLimits::of(&s))
    }
}

impl BenchLimits {
    pub fn of(s: &crate::settings::Resolved) -> BenchLimits {
        BenchLimits {
            min_k: s.min_storage_temperature_k,
            max_k: s.max_service_temperature_k,
            gauge_pa: s.gauge_resolution_pa,
        }
    }
}

impl Model {
    pub fn new(label: String, color: bool) -> Model {
        Model {
            view: View::Library,
            overlay: Overlay::None,
            library: LibraryState { label, ..LibraryState::default() },
            doc: None,
            check_selected: None,
            status: String::new(),
            color,
            shown: crate::units::Shown::default(),
            limits: BenchLimits::default(),
            verification: None,
            quit: false,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_estimate_runs_on_a_thread_of_its_own_and_answers_as_anywhere_else() {
        let pool = estimate_pool().expect("a thread for the estimate");
        // No other worker: the joins inside run one after the other, on that thread.
        assert_eq!(pool.install(rayon::current_num_threads), 1);
        assert_ne!(pool.install(|| std::thread::current().id()), std::thread::current().id());
        let catalogue = Catalogue::built_in();
        let settings = crate::settings::Settings::default().resolve("", "defaults").expect("defaults");
        // Calibration blends and wide blends with heavy traces (premix stages, splits).
        let mut seen = 0;
        for (_, recipe) in crate::speed::panel(7, 8).into_iter().filter(|(k, _)| ["calibration", "wide"].contains(k)) {
            let alone = Computed::estimate(&recipe, &catalogue, &settings);
            crate::speed::forget_kept_answers();
            let shared = Computed::judged(&recipe, &catalogue, &settings, Some(Eos::Pr));
            assert!(alone.phases_estimated, "{}", recipe.name);
            let (Ok(a), Ok(b), Ok(order)) = (&alone.plan, &shared.plan, &alone.order) else {
                panic!("{}: {:?}", recipe.name, alone.plan.err());
            };
            // Everything but the fluids (whose mixtures are told apart by a serial).
            fn plain(p: &Plan) -> String {
                let stages: Vec<String> = (p.premixes.iter().flat_map(|x| &x.stages))
                    .map(|s| format!("{} {} {:?}", s.name, s.needed_mol, s.plan.as_ref().map(|p| plain(p))))
                    .collect();
                format!(
                    "{:?}",
                    (&p.totals, &p.components, &p.steps, &p.models, &p.following, &p.heel, &p.notes, stages)
                )
            }
            assert_eq!(plain(a), plain(b), "{}", recipe.name);
            assert!(!a.premixes.is_empty() || order.sources.len() < 3, "{}", recipe.name);
            let checks = |c: &Computed| -> Vec<String> {
                c.checks
                    .iter()
                    .flatten()
                    .map(|c| format!("{} {:?} {:?} {}", c.id, c.severity, c.data, c.message))
                    .collect()
            };
            assert!(!checks(&alone).is_empty());
            assert_eq!(checks(&alone), checks(&shared));
            seen += 1;
            assert_eq!(format!("{:?}", alone.z_curves), format!("{:?}", shared.z_curves));
        }
        assert_eq!(seen, 4);
    }
}
