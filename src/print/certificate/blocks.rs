//! The certificate as blocks for the typeset PDF: the same content as the text, from the
//! same rows, set as a title block, ruled tables and paragraphs.

use super::typeset::Block;
use super::{with_uncertainty, Certificate, RecipeCheck, COVERAGE_FACTOR, IN_PROGRESS_BANNER};

impl Certificate<'_> {
    /// The blocks of the typeset certificate.
    pub fn blocks(&self) -> Vec<Block> {
        let mut b = Vec::new();
        if let Some(why) = &self.unfinished {
            b.push(Block::Banner(vec![IN_PROGRESS_BANNER.into(), why.clone()]));
        }
        let inconsistent = self.inconsistent();
        if !inconsistent.is_empty() {
            b.push(Block::Banner(vec![
                format!("STOP - NOT CONSISTENT WITH ANALYSIS: {}", inconsistent.join(", ")),
                "The analysis does not confirm the prepared content: do not issue.".into(),
            ]));
        }
        let title = if self.in_progress() { "Composition so far" } else { "Certificate of preparation" };
        let mut subtitle = "Draft for review by the laboratory.".to_string();
        if !self.document.recipe_title.is_empty() {
            subtitle = format!("{} {}", self.document.recipe_title, subtitle);
        }
        b.push(Block::Title { title: title.into(), subtitle, facts: self.facts() });
        b.extend(self.table_blocks());
        b.extend(self.closing_blocks());
        b
    }

    /// Composition, verification, additions, budget and Monte Carlo check.
    fn table_blocks(&self) -> Vec<Block> {
        let mut b = Vec::new();
        b.push(Block::Heading("Composition".into()));
        b.push(Block::Text(format!("U = k u with k = {COVERAGE_FACTOR} (about 95 %).")));
        b.push(Block::Table {
            columns: columns(&[
                ("gas", false),
                ("amount", true),
                ("U", true),
                ("unit", false),
                ("target", true),
                ("judged", false),
            ]),
            rows: self.composition_rows().into_iter().map(Vec::from).collect(),
        });
        if !self.verifications.is_empty() {
            b.push(Block::Heading("Verification by analysis (ISO 6143)".into()));
            b.extend(self.verification_lines().into_iter().skip(1).map(|l| Block::Text(l.trim().to_string())));
        }
        b.push(Block::Heading("Additions".into()));
        b.push(Block::Table {
            columns: columns(&[("#", true), ("added", true), ("source", false)]),
            rows: self.addition_rows().into_iter().map(Vec::from).collect(),
        });
        let notes: Vec<String> = self
            .additions_lines()
            .into_iter()
            .filter(|l| l.starts_with("  ") && !l.starts_with("   source "))
            .map(|l| l.trim().to_string())
            .collect();
        b.push(Block::Text(notes.join(" ")));
        b.push(Block::Heading("Uncertainty budget".into()));
        b.push(Block::Text("The largest contributions to u, as shares of u².".into()));
        b.push(Block::Table {
            columns: columns(&[("gas", false), ("u", true), ("input", false), ("share", true)]),
            rows: self.budget_rows(),
        });
        b.push(Block::Heading("Monte Carlo check".into()));
        let mc = &self.evaluation.monte_carlo;
        b.push(Block::Text(format!("{} draws, seed {}, 95 % intervals.", mc.draws, mc.seed)));
        b.push(Block::Table {
            columns: columns(&[
                ("gas", false),
                ("unit", false),
                ("u GUM", true),
                ("u MC", true),
                ("interval MC", true),
                ("GUM and MC", false),
            ]),
            rows: self.monte_carlo_rows().into_iter().map(Vec::from).collect(),
        });
        let mc_notes: Vec<String> = self
            .monte_carlo_lines()
            .into_iter()
            .filter(|l| l.starts_with("  "))
            .map(|l| l.trim().to_string())
            .collect();
        if !mc_notes.is_empty() {
            b.push(Block::Text(mc_notes.join(" ")));
        }
        b
    }

    /// Remarks, cautions, signatures and the caution of a draft.
    fn closing_blocks(&self) -> Vec<Block> {
        let mut b = Vec::new();
        if !self.remarks.is_empty() {
            b.push(Block::Heading("For the reviewer".into()));
            b.push(Block::List(self.remarks.clone()));
        }
        if !self.document.cautions.is_empty() {
            b.push(Block::Heading("Cautions of this blend".into()));
            b.push(Block::List(self.document.cautions.clone()));
        }
        if self.unfinished.is_none() {
            b.push(Block::Signatures(vec!["prepared by".into(), "approved by".into()]));
        }
        b.push(Block::Heading("Caution".into()));
        b.push(Block::Text(self.draft_caution()));
        b
    }

    /// The title block's facts: number, dates, order, cylinder, recipe, fill, method.
    fn facts(&self) -> Vec<(String, String)> {
        let (d, r, e) = (&self.document, self.record, self.evaluation);
        let or_not = |s: &str| if s.trim().is_empty() { "(not recorded)".to_string() } else { s.to_string() };
        let mut f = vec![
            ("certificate".to_string(), d.number.clone()),
            ("issued".into(), format!("{} | valid until {}", d.issued, d.valid_until)),
            ("order".into(), format!("{} | customer {}", or_not(&d.order_reference), or_not(&d.customer))),
            ("record".into(), format!("{} rev {}", self.id, r.revision)),
        ];
        let mut cylinder = vec![r.cylinder.clone()];
        cylinder.extend(d.water_capacity_l.map(|v| format!("{v} L water capacity")));
        cylinder.extend(d.working_pressure_bar.map(|p| format!("working pressure {p:.0} bar")));
        f.push(("cylinder".into(), cylinder.join(" | ")));
        if let Some(p) = d.final_pressure_bar {
            f.push(("final pressure".into(), format!("{p:.1} bar (absolute) at 15 °C, from the composition made")));
        }
        let check = match &self.recipe_check {
            RecipeCheck::Verified => "verified: that revision is on file with this hash".to_string(),
            RecipeCheck::NotVerified(why) => format!("NOT VERIFIED: {why}"),
        };
        let hash = r.recipe_sha256.as_deref().map_or(String::new(), |h| format!(" | sha256 {h}"));
        f.push(("recipe".into(), format!("{} revision {}{hash} | {check}", r.recipe, r.recipe_revision)));
        f.push((
            "filled".into(),
            format!(
                "{} to {}",
                r.started.as_deref().unwrap_or("(start not recorded)"),
                r.finished.as_deref().unwrap_or("(not finished)")
            ),
        ));
        f.push(("operator".into(), format!("{} | balance {}", or_not(&r.operator), or_not(&r.balance))));
        let model = e.measurand.models().map_or(String::new(), |(m, other)| {
            format!(
                "; model {}{}",
                m.key(),
                other.map(|o| format!(", spread against {} in the budget", o.key())).unwrap_or_default()
            )
        });
        f.push(("method".into(), format!("{}{model}", self.method_text())));
        f.push(("uncertainty".into(), "JCGM 100 (GUM), checked by Monte Carlo (JCGM 101)".into()));
        f
    }

    /// The budget as rows: gas and u on the first row of each gas, then its largest inputs.
    fn budget_rows(&self) -> Vec<Vec<String>> {
        let e = self.evaluation;
        let mut rows = Vec::new();
        for i in 0..e.gum.values.len() {
            let (_, us, unit) = with_uncertainty(e.gum.values[i], e.gum.u[i]);
            if us == "none" {
                rows.push(vec![
                    self.id_of(i).into(),
                    "0".into(),
                    "no uncertainty stated, so no budget".into(),
                    "".into(),
                ]);
                continue;
            }
            let mut first = true;
            for c in e.gum.budget[i].iter().filter(|c| c.share_percent >= 0.01).take(4) {
                let (gas, u) =
                    if first { (self.id_of(i).to_string(), format!("{us} {unit}")) } else { Default::default() };
                rows.push(vec![gas, u, c.group.clone(), format!("{:.2} %", c.share_percent)]);
                first = false;
            }
        }
        rows
    }
}

fn columns(spec: &[(&str, bool)]) -> Vec<(String, bool)> {
    spec.iter().map(|(h, right)| (h.to_string(), *right)).collect()
}
