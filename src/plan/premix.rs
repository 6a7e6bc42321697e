//! Premix proposals for additions too small to dose from a pure gas.
//!
//! A step whose pressure increment or mass is below what the gauge or scale resolves is
//! dosed instead from a premix of that gas in the balance gas. The premix strength is
//! chosen so that the premix addition is at least 5 % of the fill it goes into (a step the
//! gauge and scale read well), rounded down to 1, 2 or 5 × 10^k: common practice, no
//! source. When the pure gas is still too little to dose into that premix, the premix is
//! made from a stronger one, and so on: a cascade of stages, each planned from the one
//! before, the first from the pure gas, until every addition can be dosed.

use super::{Plan, PlanError, PlanOptions};
use crate::gas::Catalogue;
use crate::mixture::{Composition, FractionUnit, Share};
use crate::recipe::{Before, Fill, Order, Source, Target};

/// At most this many premix stages for one gas (1 ppb from a pure gas needs four).
pub const MAX_STAGES: usize = 4;

/// Smallest share of the fill that a premix addition should make up.
const MIN_PREMIX_SHARE: f64 = 0.05;

/// One premix of a cascade.
#[derive(Debug, Clone)]
pub struct Stage {
    /// Mole fraction of the gas in this premix.
    pub fraction: f64,
    /// The premix as written, e.g. `CO=1%,N2=balance`.
    pub spec: String,
    /// A name for it, e.g. `CO 1 % in N2`.
    pub name: String,
    /// A library name for its recipe, e.g. `premix-CO-1%-in-N2`.
    pub recipe_name: String,
    /// Amount of this premix that the next stage (or the blend) takes, mol and g.
    pub needed_mol: f64,
    pub needed_g: f64,
    /// Fill pressure of the premix cylinder (the blend's cylinder type), Pa at the
    /// reference temperature.
    pub fill_pressure_pa: f64,
    /// The order that makes it: from the stage before, or from the pure gas.
    pub order: Order,
    /// Its plan.
    pub plan: Result<Box<Plan>, String>,
}

impl Stage {
    /// Whether every addition of this stage can be dosed at the bench's resolutions.
    pub fn dosable(&self) -> bool {
        self.plan.as_ref().is_ok_and(|p| !p.steps.iter().any(|s| s.flags.iter().any(|f| f.too_small())))
    }

    /// Whether one premix cylinder holds what the next stage (or the blend) takes.
    pub fn enough(&self) -> bool {
        self.plan.as_ref().is_ok_and(|p| self.needed_mol <= p.totals.amount_mol)
    }
}

/// A premix cascade the tool proposes for one step.
#[derive(Debug, Clone)]
pub struct Proposal {
    /// Index of the step it replaces.
    pub step: usize,
    /// Catalogue index of the gas it carries.
    pub gas: usize,
    /// The stages, the one made from the pure gas first; the last is dosed into the blend.
    pub stages: Vec<Stage>,
    /// Further steps (with their gases) that the same premix doses: a premix of several
    /// gases replaces their pure sources too.
    pub also: Vec<(usize, usize)>,
    /// Why this premix is proposed (a premix of several gases saves cylinders).
    pub why: Option<String>,
}

impl Proposal {
    /// The premix dosed into the blend.
    pub fn last(&self) -> &Stage {
        // A proposal is only made with at least one stage.
        &self.stages[self.stages.len() - 1]
    }

    /// The blend's steps it replaces, in the order of [`Proposal::gases`].
    pub fn steps(&self) -> Vec<usize> {
        std::iter::once(self.step).chain(self.also.iter().map(|a| a.0)).collect()
    }

    /// The steps it replaces as a blender reads them: `2`, or `1 and 2`, in fill order.
    pub fn steps_text(&self) -> String {
        let mut steps = self.steps();
        steps.sort_unstable();
        let words: Vec<String> = steps.iter().map(|s| (s + 1).to_string()).collect();
        match words.split_last() {
            Some((last, rest)) if !rest.is_empty() => format!("{} and {last}", rest.join(", ")),
            _ => words.join(""),
        }
    }

    /// The gases it carries, in the order of [`Proposal::steps`].
    pub fn gases(&self) -> Vec<usize> {
        std::iter::once(self.gas).chain(self.also.iter().map(|a| a.1)).collect()
    }

    /// Every stage plans and can be dosed, and each cylinder holds what the next takes.
    pub fn complete(&self) -> bool {
        self.stages.iter().all(|s| s.dosable() && s.enough())
    }
}

/// Largest of 1, 2, 5 × 10^k not above `x`.
pub fn round_down_125(x: f64) -> f64 {
    let k = x.log10().floor();
    let base = 10f64.powf(k);
    // 2e-5 / 1e-5 is 1.9999999999999998 in floating point: a hair of slack keeps it 2.
    let m = x / base * (1.0 + 1e-12);
    let (step, base) = if m >= 10.0 {
        (1.0, base * 10.0)
    } else if m >= 5.0 {
        (5.0, base)
    } else if m >= 2.0 {
        (2.0, base)
    } else if m >= 1.0 {
        (1.0, base)
    } else {
        (5.0, base / 10.0)
    };
    step * base
}

/// A share written the way a blender would: % down to 0.1 %, then ppm, then ppb.
pub fn share_of(fraction: f64) -> Share {
    let (value, unit) = if fraction >= 1e-3 {
        (fraction * 100.0, FractionUnit::Percent)
    } else if fraction >= 1e-6 {
        (fraction * 1e6, FractionUnit::Ppm)
    } else {
        (fraction * 1e9, FractionUnit::Ppb)
    };
    // Values come from round_down_125, so a short decimal is exact enough to print.
    Share::Of { value: (value * 1e9).round() / 1e9, unit }
}

type Planner = fn(&Order, &Catalogue, &PlanOptions, usize) -> Result<Plan, PlanError>;

/// Proposals for every flagged step that doses a pure, non-balance gas. `planner` plans a
/// stage without proposing premixes of its own (the cascade is made here).
pub fn propose(
    plan: &Plan,
    order: &Order,
    catalogue: &Catalogue,
    options: &PlanOptions,
    planner: Planner,
) -> Vec<Proposal> {
    let balance_gas = balance_gas_of(order);
    // A stage proposes nothing itself; the screen plans it for its steps alone.
    let options = &PlanOptions { order: None, screening_only: options.stage_steps_only, ..options.clone() };
    let mut out = Vec::new();
    for (index, step) in plan.steps.iter().enumerate() {
        if !step.flags.iter().any(|f| f.too_small()) {
            continue;
        }
        let Some(source) = order.sources.iter().find(|s| s.name == step.source) else {
            continue;
        };
        if !source.pure || source.composition.gases[0] == balance_gas {
            continue;
        }
        let gas = source.composition.gases[0];
        let x = plan.components.iter().find(|c| c.gas == gas).map_or(0.0, |c| c.mole_fraction);
        if !(x > 0.0) {
            continue;
        }
        let maker = StageMaker {
            gas,
            balance_gas,
            fill_pressure_pa: plan.totals.pressure_pa.min(order.working_pressure_pa),
            blend: order,
            catalogue,
            options: options.clone(),
            planner,
        };
        let Some((fractions, from_pure)) = maker.strengths(x) else { continue };
        let mut stages = maker.stages(&fractions, from_pure);
        maker.count_needed(&mut stages, step.add_amount_mol);
        out.push(Proposal { step: index, gas, stages, also: Vec::new(), why: None });
    }
    let setting = Setting { plan, order, catalogue, options: options.clone(), planner };
    if let Some(one) = setting.combined(&out) {
        out.insert(0, one);
    }
    out
}

/// What a premix of several gases is planned in: the blend, its plan, and how to plan.
struct Setting<'a> {
    plan: &'a Plan,
    order: &'a Order,
    catalogue: &'a Catalogue,
    options: PlanOptions,
    planner: Planner,
}

impl Setting<'_> {
    /// One premix of several gases in the balance gas where two or more steps each need a
    /// premix from the pure gas: the gases keep their ratio in the blend, so one addition of
    /// it brings each, and one cylinder (one fill, one certificate) does the work of several.
    /// Proposed only where one stage from the pure gases doses every one of them and no two
    /// of its gases (nor one with the balance gas) react, or burn together: in the premix
    /// cylinder the pure gases meet before the balance gas dilutes them, so a flammable gas
    /// never shares one with an oxidiser, whatever the final strengths (common practice).
    /// Else the weakest gas is left to its own premix and the rest tried again.
    fn combined(&self, singles: &[Proposal]) -> Option<Proposal> {
        let (plan, catalogue) = (self.plan, self.catalogue);
        let mut members: Vec<(usize, usize, f64)> = singles
            .iter()
            .filter_map(|p| Some((p.step, p.gas, plan.components.iter().find(|c| c.gas == p.gas)?.mole_fraction)))
            .collect();
        members.sort_by(|a, b| b.2.total_cmp(&a.2));
        // The premix's ratio is the blend's: only where nothing else brings these gases (no
        // heel, no other source carrying one of them), so that it is also the ratio added.
        if matches!(self.order.before, Before::Heel { .. }) {
            return None;
        }
        let carried_elsewhere =
            |gas: usize| self.order.sources.iter().filter(|s| s.composition.gases.contains(&gas)).count() > 1;
        if members.iter().any(|m| carried_elsewhere(m.1)) {
            return None;
        }
        let balance_gas = balance_gas_of(self.order);
        let react = |a: usize, b: usize| {
            let (ga, gb) = (catalogue.gas(a), catalogue.gas(b));
            crate::gas::reacts_with((ga.id(), &ga.hazard()), (gb.id(), &gb.hazard())).is_some()
        };
        if members.iter().any(|m| react(m.1, balance_gas)) {
            return None;
        }
        while members.len() >= 2 {
            let gases: Vec<usize> = members.iter().map(|m| m.1).collect();
            let reacting = gases.iter().enumerate().any(|(i, &a)| gases[i + 1..].iter().any(|&b| react(a, b)));
            if !reacting {
                if let Some(p) = self.combined_of(&members, balance_gas, singles.len()) {
                    return Some(p);
                }
            }
            members.pop();
        }
        None
    }

    /// The premix of `members` (step, gas, fraction in the blend, strongest first), if one
    /// stage from the pure gases doses it.
    fn combined_of(&self, members: &[(usize, usize, f64)], balance_gas: usize, singles: usize) -> Option<Proposal> {
        let (plan, catalogue) = (self.plan, self.catalogue);
        // The premix addition is at least MIN_PREMIX_SHARE of the blend, the strongest gas
        // at a 1-2-5 strength; the others follow in the blend's ratio.
        let strongest = round_down_125(members[0].2 / MIN_PREMIX_SHARE);
        let share = members[0].2 / strongest;
        let fractions: Vec<f64> = members.iter().map(|m| m.2 / share).collect();
        if fractions.iter().sum::<f64>() >= 0.5 {
            return None;
        }
        let mut gases: Vec<usize> = members.iter().map(|m| m.1).collect();
        gases.push(balance_gas);
        let mut x = fractions.clone();
        x.push(1.0 - fractions.iter().sum::<f64>());
        let id = |g: usize| catalogue.gas(g).id().to_string();
        let parts: Vec<String> =
            members.iter().zip(&fractions).map(|(m, f)| format!("{}={}", id(m.1), share_of(*f))).collect();
        let spec = format!("{},{}=balance", parts.join(","), id(balance_gas));
        let said: Vec<String> =
            members.iter().zip(&fractions).map(|(m, f)| format!("{} {}", id(m.1), share_text(&share_of(*f)))).collect();
        let name = format!("{} in {}", said.join(" + "), id(balance_gas));
        let recipe_name = format!(
            "premix-{}-in-{}",
            members
                .iter()
                .zip(&fractions)
                .map(|(m, f)| format!("{}-{}", id(m.1), share_of(*f)))
                .collect::<Vec<_>>()
                .join("-"),
            id(balance_gas)
        );
        // Many gases make a name the library refuses: then no premix of them all.
        crate::library::check_name(&recipe_name).ok()?;
        let fill_pressure_pa = plan.totals.pressure_pa.min(self.order.working_pressure_pa);
        let order = self.combined_order(&name, &gases, &x, fill_pressure_pa);
        let planned = (self.planner)(&order, catalogue, &self.options, MAX_STAGES).ok()?;
        if planned.steps.iter().any(|s| s.flags.iter().any(|f| f.too_small())) {
            return None;
        }
        let needed_mol = share * plan.totals.amount_mol;
        let mixture = Composition { gases, fractions: x };
        let stage = Stage {
            fraction: fractions[0],
            spec,
            name,
            recipe_name,
            needed_mol,
            needed_g: needed_mol * mixture.molar_mass(catalogue),
            fill_pressure_pa,
            order,
            plan: Ok(Box::new(planned)),
        };
        let n = members.len();
        let why = format!(
            "one cylinder instead of {n}: {} keep their ratio in the blend, so one addition brings each{}",
            members.iter().map(|m| id(m.1)).collect::<Vec<_>>().join(" and "),
            if singles > n { " (the others need premixes of their own)" } else { "" }
        );
        Some(Proposal {
            step: members[0].0,
            gas: members[0].1,
            stages: vec![stage],
            also: members[1..].iter().map(|m| (m.0, m.1)).collect(),
            why: Some(why),
        })
    }

    /// The order of a premix of several gases from the pure gases, in the blend's cylinder.
    fn combined_order(&self, name: &str, gases: &[usize], x: &[f64], fill_pressure_pa: f64) -> Order {
        let last = gases.len() - 1;
        Order {
            name: name.to_string(),
            description: format!("premix for {}", self.order.name),
            targets: gases
                .iter()
                .enumerate()
                .map(|(i, &gas)| Target {
                    gas,
                    share: if i == last { Share::Balance } else { share_of(x[i]) },
                    tolerance: None,
                })
                .collect(),
            balance: Some(last),
            composition: Composition { gases: gases.to_vec(), fractions: x.to_vec() },
            fill: Fill::PressurePa(fill_pressure_pa),
            tare_g: None,
            serial: None,
            sources: gases.iter().map(|&g| pure(g, self.catalogue)).collect(),
            fill_order: Vec::new(),
            notes: String::new(),
            before: Before::Evacuated { residual_pa: 0.0 },
            ..self.order.clone()
        }
    }
}

/// The blend's balance gas: the one named, else the largest share.
fn balance_gas_of(order: &Order) -> usize {
    match order.balance {
        Some(b) => order.targets[b].gas,
        None => {
            let i = (0..order.composition.gases.len())
                .max_by(|&a, &b| order.composition.fractions[a].total_cmp(&order.composition.fractions[b]))
                .unwrap_or(0);
            order.composition.gases[i]
        }
    }
}

/// How many premix stages' plans the process keeps (see [`StageMaker::plan`]).
const STAGE_PLANS_KEPT: usize = 64;

/// The kept stage plans, by what each is made of.
static STAGE_PLANS: crate::kept::Kept<String, Result<Plan, PlanError>> = crate::kept::Kept::new(STAGE_PLANS_KEPT);

/// Forget the kept stage plans (see [`crate::speed::forget_kept_answers`]).
pub fn forget_kept() {
    STAGE_PLANS.clear();
}

/// Makes the premix stages of one gas in the blend's balance gas.
struct StageMaker<'a> {
    gas: usize,
    balance_gas: usize,
    fill_pressure_pa: f64,
    blend: &'a Order,
    catalogue: &'a Catalogue,
    options: PlanOptions,
    planner: Planner,
}

impl StageMaker<'_> {
    /// The premix of strength `f`: the gas in the balance gas.
    fn premix(&self, f: f64) -> Composition {
        Composition { gases: vec![self.gas, self.balance_gas], fractions: vec![f, 1.0 - f] }
    }

    /// The order of the stage of strength `fraction`, filled from the pure gas or from the
    /// stage before.
    fn order(&self, fraction: f64, from: Option<&Stage>) -> Order {
        let (gas, balance_gas, catalogue, order) = (self.gas, self.balance_gas, self.catalogue, self.blend);
        let share = share_of(fraction);
        let first = match from {
            None => pure(gas, catalogue),
            Some(s) => Source { name: s.name.clone(), composition: self.premix(s.fraction), pure: false },
        };
        Order {
            name: stage_name(gas, fraction, balance_gas, catalogue),
            description: format!("premix for {}", order.name),
            order: order.order.clone(),
            targets: vec![
                Target { gas, share, tolerance: None },
                Target { gas: balance_gas, share: Share::Balance, tolerance: None },
            ],
            balance: Some(1),
            composition: self.premix(fraction),
            fill: Fill::PressurePa(self.fill_pressure_pa),
            tare_g: None,
            serial: None,
            sources: vec![first, pure(balance_gas, catalogue)],
            fill_order: Vec::new(),
            notes: String::new(),
            before: Before::Evacuated { residual_pa: 0.0 },
            ..order.clone()
        }
    }

    /// A stage's plan. The last [`STAGE_PLANS_KEPT`] are kept for the process by everything
    /// they are made of (the stage's order, the options, the two gases' records): an edit of
    /// the blend that leaves a stage alone (another gas's amount, a tolerance), and recipes
    /// with the same premix, plan it once.
    fn plan(&self, o: &Order) -> Result<Plan, PlanError> {
        let (gas, balance) = (self.catalogue.gas(self.gas), self.catalogue.gas(self.balance_gas));
        let key = format!("{o:?}|{:?}|{gas:?}|{balance:?}", self.options);
        STAGE_PLANS.get_or(key, || (self.planner)(o, self.catalogue, &self.options, MAX_STAGES))
    }

    /// The strengths, weakest first: each next one until the pure gas can be dosed; with the
    /// plan from the pure gas of the strongest (the first stage's). None when no strength
    /// helps.
    fn strengths(&self, x: f64) -> Option<(Vec<f64>, Result<Plan, PlanError>)> {
        let mut fractions = Vec::new();
        let mut from_pure = None;
        let mut need = x;
        while fractions.len() < MAX_STAGES {
            let f = round_down_125(need / MIN_PREMIX_SHARE);
            if f >= 0.5 || fractions.last().is_some_and(|l| f <= *l) {
                break;
            }
            fractions.push(f);
            let planned = self.plan(&self.order(f, None));
            let id = self.catalogue.gas(self.gas).id();
            let dosable = planned
                .as_ref()
                .is_ok_and(|p| p.steps.iter().all(|s| s.source != id || !s.flags.iter().any(|f| f.too_small())));
            let done = dosable || planned.is_err();
            from_pure = Some(planned);
            if done {
                break;
            }
            need = f;
        }
        Some((fractions, from_pure?))
    }

    /// The stages strongest first (from the pure gas), each planned from the one before.
    fn stages(&self, fractions: &[f64], from_pure: Result<Plan, PlanError>) -> Vec<Stage> {
        let (gas, balance_gas, catalogue) = (self.gas, self.balance_gas, self.catalogue);
        let mut stages: Vec<Stage> = Vec::new();
        let mut first_plan = Some(from_pure);
        for &f in fractions.iter().rev() {
            let o = self.order(f, stages.last());
            let planned = match first_plan.take() {
                Some(p) => p,
                None => self.plan(&o),
            };
            let plan = planned.map(Box::new).map_err(|e| e.to_string());
            stages.push(Stage {
                fraction: f,
                spec: format!(
                    "{}={},{}=balance",
                    catalogue.gas(gas).id(),
                    share_of(f),
                    catalogue.gas(balance_gas).id()
                ),
                name: o.name.clone(),
                recipe_name: recipe_name(gas, f, balance_gas, catalogue),
                needed_mol: 0.0,
                needed_g: 0.0,
                fill_pressure_pa: self.fill_pressure_pa,
                order: o,
                plan,
            });
        }
        stages
    }

    /// What each stage gives the next: the blend's step (`step_mol` of the weakest premix),
    /// then each stage's premix step.
    fn count_needed(&self, stages: &mut [Stage], step_mol: f64) {
        let last = stages.len() - 1;
        let mut needed = step_mol / stages[last].fraction;
        for k in (0..stages.len()).rev() {
            stages[k].needed_mol = needed;
            stages[k].needed_g = needed * self.premix(stages[k].fraction).molar_mass(self.catalogue);
            if k > 0 {
                let from = &stages[k - 1].name;
                needed = stages[k]
                    .plan
                    .as_ref()
                    .ok()
                    .and_then(|p| p.steps.iter().find(|s| &s.source == from))
                    .map_or(0.0, |s| s.add_amount_mol);
            }
        }
    }
}

/// What accepting a proposal makes: a recipe per stage (the one from the pure gas first),
/// each taking the stage before as a linked premix source, and the blend's recipe with the
/// last stage as the source of the gas in place of the pure gas.
#[derive(Debug, Clone, PartialEq)]
pub struct Accepted {
    pub stages: Vec<crate::recipe::Recipe>,
    pub blend: crate::recipe::Recipe,
}

/// Turn a proposal into library recipes. `blend` is the recipe the plan was made from.
pub fn accept(proposal: &Proposal, blend: &crate::recipe::Recipe, catalogue: &Catalogue) -> Accepted {
    use crate::recipe::{FillTarget, Recipe, SourceLine};
    let mut stages: Vec<Recipe> = Vec::new();
    for (k, st) in proposal.stages.iter().enumerate() {
        let sources = match k {
            0 => Vec::new(),
            _ => {
                let from = &proposal.stages[k - 1];
                let balance = st.order.targets.last().map_or(String::new(), |t| catalogue.gas(t.gas).id().to_string());
                vec![
                    SourceLine::Premix {
                        name: from.name.clone(),
                        mix: from.spec.clone(),
                        recipe: Some(from.recipe_name.clone()),
                    },
                    SourceLine::Pure(balance),
                ]
            }
        };
        let bar = crate::units::bar(st.fill_pressure_pa);
        stages.push(Recipe {
            name: st.recipe_name.clone(),
            description: format!("{}: premix stage {} of {} for {}", st.name, k + 1, proposal.stages.len(), blend.name),
            order: blend.order.clone(),
            components: stage_components(st, blend, catalogue),
            cylinder: crate::recipe::CylinderLine { tare: None, serial: None, ..blend.cylinder.clone() },
            fill: FillTarget::Pressure(format!("{}bar", (bar * 1e3).round() / 1e3)),
            sources,
            fill_order: Vec::new(),
            before_fill: None,
            notes: format!(
                "Cylinder of the blend's type; type its serial and tare before the fill. {} mol of it go into {}.",
                crate::units::Sig(st.needed_mol, 3),
                if k + 1 == proposal.stages.len() { blend.name.clone() } else { proposal.stages[k + 1].name.clone() }
            ),
            revision: 0,
            saved: None,
            saved_by: None,
            change_note: None,
            ..blend.clone()
        });
    }
    Accepted { stages, blend: blend_with(proposal, blend, catalogue) }
}

/// A stage's components as the recipe lists them: each gas at its strength with the
/// blend's relative tolerance on it (a premix off by 1 % makes the blend off by 1 %, where
/// it is not certified and re-planned from), the balance gas last.
fn stage_components(
    st: &Stage,
    blend: &crate::recipe::Recipe,
    catalogue: &Catalogue,
) -> Vec<crate::recipe::ComponentLine> {
    use crate::recipe::ComponentLine;
    let relative = |gas: usize| {
        let in_blend = blend.components.iter().find(|c| catalogue.find(&c.gas).is_ok_and(|g| g == gas))?;
        let x = crate::mixture::parse_share(&in_blend.amount).ok()?.fraction()?;
        relative_tolerance(in_blend.tolerance.as_deref()?, x)
    };
    st.order
        .targets
        .iter()
        .map(|t| {
            let gas = catalogue.gas(t.gas).id().to_string();
            match t.share {
                Share::Balance => ComponentLine { gas, amount: "balance".into(), tolerance: None },
                share => ComponentLine { gas, amount: share.to_string(), tolerance: relative(t.gas) },
            }
        })
        .collect()
}

/// A tolerance as written on a blend's component of mole fraction `x`, as a relative one
/// (`2%rel`): relative ones as they are, absolute ones divided by `x`.
fn relative_tolerance(written: &str, x: f64) -> Option<String> {
    let t = written.trim();
    if t.ends_with("%rel") {
        return Some(t.to_string());
    }
    let rel = crate::recipe::parse_tolerance(t, Some(x)).ok()? / x * 100.0;
    let text = format!("{}%rel", crate::units::Sig(rel, 2));
    // A relative tolerance must read back below 100 %rel: a wider one is left out.
    (rel.is_finite() && rel > 0.0 && crate::recipe::parse_tolerance(&text, Some(x)).is_ok()).then_some(text)
}

/// The blend with the proposal's last stage as the source of its gases in place of the
/// pure ones (the first one's place kept, the others dropped), in the fill order too.
fn blend_with(proposal: &Proposal, blend: &crate::recipe::Recipe, catalogue: &Catalogue) -> crate::recipe::Recipe {
    use crate::recipe::SourceLine;
    let last = proposal.last();
    let mut recipe = blend.clone();
    if recipe.sources.is_empty() {
        recipe.sources = recipe.components.iter().map(|c| SourceLine::Pure(c.gas.clone())).collect();
    }
    let premix =
        SourceLine::Premix { name: last.name.clone(), mix: last.spec.clone(), recipe: Some(last.recipe_name.clone()) };
    let gases = proposal.gases();
    let carried = |id: &str| catalogue.find(id).is_ok_and(|g| gases.contains(&g));
    let replaced = |s: &SourceLine| matches!(s, SourceLine::Pure(id) if carried(id));
    match recipe.sources.iter().position(replaced) {
        Some(i) => recipe.sources[i] = premix,
        None => recipe.sources.push(premix),
    }
    recipe.sources.retain(|s| !replaced(s));
    let mut order = Vec::new();
    for name in &recipe.fill_order {
        let name = if carried(name) { last.name.clone() } else { name.clone() };
        if !order.contains(&name) {
            order.push(name);
        }
    }
    recipe.fill_order = order;
    recipe
}

/// The proposal as lines of at most 80 columns, for the sheet and the screen: every stage
/// with its steps and what it gives the next.
pub fn describe(p: &Proposal, step_source: &str, volume_m3: f64, d: &crate::units::Shown) -> Vec<String> {
    use crate::ron_format::clip;
    use crate::units::Sig;
    let mut out = Vec::new();
    let last = p.last();
    if p.also.is_empty() {
        out.push(format!(
            "PREMIX PROPOSED for step {} ({}): dose it from {} instead",
            p.step + 1,
            step_source,
            last.name
        ));
    } else {
        out.push(format!("PREMIX PROPOSED for steps {}: dose them from one premix,", p.steps_text()));
        out.push(format!("  {}", clip(&last.name, 76)));
    }
    if let Some(why) = &p.why {
        out.extend(crate::ron_format::wrap_words(why, 76).into_iter().map(|l| format!("  {l}")));
    }
    out.push(match p.stages.len() {
        1 if !p.also.is_empty() => "  made from the pure gases:".into(),
        1 => "  made from the pure gas:".into(),
        n => format!("  made in {n} stages, each from the one before, the first from the pure gas:"),
    });
    for (k, st) in p.stages.iter().enumerate() {
        let label = char::from(b'A' + k as u8);
        out.push(format!("  {label}  {} ({})", st.name, st.spec));
        out.push(format!(
            "     {} L to {} {} at {}; recipe {}",
            Sig(volume_m3 * 1e3, 4),
            Sig(d.p(st.fill_pressure_pa), 4),
            d.pu(),
            d.tf(st.order.reference_temperature_k),
            clip(&st.recipe_name, 36)
        ));
        match &st.plan {
            Ok(inner) => {
                for (i, s) in inner.steps.iter().enumerate() {
                    let mark = if s.flags.iter().any(|f| f.too_small()) { " !" } else { "" };
                    out.push(format!(
                        "     {}  {:<18} add {} mol ({} g), stop at {} {}{mark}",
                        i + 1,
                        clip(&s.source, 18),
                        Sig(s.add_amount_mol, 4),
                        Sig(s.add_mass_g, 4),
                        d.pf(s.pressure_after_pa),
                        d.pu(),
                    ));
                }
            }
            Err(e) => out.push(format!("     no plan for it: {}", clip(e, 60))),
        }
        let into = if k + 1 == p.stages.len() {
            let plural = if p.also.is_empty() { "" } else { "s" };
            format!("the blend (step{plural} {})", p.steps_text())
        } else {
            format!("stage {}", char::from(b'B' + k as u8))
        };
        out.push(format!("     {} mol ({} g) of it go into {into}", Sig(st.needed_mol, 4), Sig(st.needed_g, 4)));
        if !st.enough() && st.plan.is_ok() {
            out.push("     ! one cylinder of it does not hold that much: fill it larger".into());
        }
    }
    if p.stages.iter().any(|s| !s.dosable()) {
        out.push(format!("  ! a stage is still below the resolutions after {MAX_STAGES} stages: a finer"));
        out.push("    gauge or scale, or a bought premix, is needed".into());
    }
    out
}

fn stage_name(gas: usize, fraction: f64, balance: usize, catalogue: &Catalogue) -> String {
    format!("{} {} in {}", catalogue.gas(gas).id(), share_text(&share_of(fraction)), catalogue.gas(balance).id())
}

/// The library name of a stage's recipe: `premix-CO-1%-in-N2`.
fn recipe_name(gas: usize, fraction: f64, balance: usize, catalogue: &Catalogue) -> String {
    format!("premix-{}-{}-in-{}", catalogue.gas(gas).id(), share_of(fraction), catalogue.gas(balance).id())
}

fn pure(gas: usize, catalogue: &Catalogue) -> Source {
    Source {
        name: catalogue.gas(gas).id().to_string(),
        composition: Composition { gases: vec![gas], fractions: vec![1.0] },
        pure: true,
    }
}

fn share_text(share: &Share) -> String {
    match share {
        Share::Of { value, unit: FractionUnit::Percent } => format!("{value} %"),
        Share::Of { value, unit } => format!("{value} {}", unit.suffix()),
        Share::Balance => "balance".into(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rounding_to_1_2_5() {
        assert_eq!(round_down_125(0.01), 0.01);
        // Exact decades and steps stay themselves despite floating-point quotients.
        assert!((round_down_125(2e-5) - 2e-5).abs() < 1e-20);
        assert!((round_down_125(5e-4) - 5e-4).abs() < 1e-19);
        assert!((round_down_125(1e-3) - 1e-3).abs() < 1e-18);
        assert!((round_down_125(0.0137) - 0.01).abs() < 1e-18);
        assert!((round_down_125(0.037) - 0.02).abs() < 1e-18);
        assert!((round_down_125(0.09) - 0.05).abs() < 1e-18);
        assert!((round_down_125(3.2e-4) - 2e-4).abs() < 1e-19);
    }

    #[test]
    fn shares_read_like_a_blender_writes_them() {
        assert_eq!(share_of(0.01).to_string(), "1%");
        assert_eq!(share_of(2e-4).to_string(), "200ppm");
        assert_eq!(share_of(5e-8).to_string(), "50ppb");
    }
}
