//! The screen's update logic, driven by key messages with no terminal.

mod common;

use std::path::PathBuf;

use fillwright::gas::Catalogue;
use fillwright::library::Library;
use fillwright::settings::Settings;
use fillwright::tui::model::{Model, Overlay, View};
use fillwright::tui::update::{self, Context, Key, Msg};

fn stamp() -> String {
    "2026-12-01T12:00:00Z".into()
}

fn setup(tag: &str) -> (Model, Context, PathBuf) {
    let dir = common::temp_dir().join(format!("fillwright-tui-{tag}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    let library = Library::at(&dir.join("library")).unwrap();
    let mut ctx = Context {
        library,
        catalogue: Catalogue::built_in(),
        settings: Settings::default().resolve("", "defaults").unwrap(),
        drafts: Some(dir.join("drafts")),
        sources: Some(dir.join("sources")),
        now: stamp,
        session: "test".into(),
        settings_file: Some(dir.join("settings.ron")),
        beside: None,
    };
    let mut model = Model::new("test library".into(), false);
    update::start(&mut model, &mut ctx);
    (model, ctx, dir)
}

fn keys(model: &mut Model, ctx: &mut Context, keys: &[Key]) {
    for k in keys {
        update::update(model, Msg::Key(*k), ctx);
    }
}

fn text(model: &mut Model, ctx: &mut Context, s: &str) {
    for c in s.chars() {
        update::update(model, Msg::Key(Key::Char(c)), ctx);
    }
}

/// Open a demo recipe by searching for it.
fn open(model: &mut Model, ctx: &mut Context, name: &str) {
    keys(model, ctx, &[Key::Char('/')]);
    text(model, ctx, name);
    keys(model, ctx, &[Key::Enter]);
    assert_eq!(model.view, View::Editor, "{}", model.status);
    assert_eq!(model.doc.as_ref().unwrap().name, name);
}

/// Type a scale reading on the Fill sheet (`w`, the reading, Enter).
fn weigh(model: &mut Model, ctx: &mut Context, reading: &str) {
    keys(model, ctx, &[Key::Char('3'), Key::Char('w')]);
    text(model, ctx, reading);
    keys(model, ctx, &[Key::Enter]);
}

/// Move the editor to the line whose label starts with `gas` (a component row).
fn go_to_component(model: &mut Model, ctx: &mut Context, gas: &str) {
    keys(model, ctx, &[Key::Home]);
    for _ in 0..40 {
        let doc = model.doc.as_ref().unwrap();
        if let fillwright::tui::model::Field::Component(i) = doc.current_field() {
            if doc.recipe.components[i].gas == gas {
                return;
            }
        }
        keys(model, ctx, &[Key::Down]);
    }
    panic!("no component {gas}");
}

#[test]
fn first_start_seeds_the_demo_library_and_lists_it() {
    let (model, _ctx, _dir) = setup("seed");
    assert_eq!(model.library.entries.len(), 7);
    assert!(model.status.contains("copied 7 demo recipes"));
    assert_eq!(model.view, View::Library);
}

#[test]
fn search_as_you_type_narrows_the_list() {
    let (mut model, mut ctx, _dir) = setup("search");
    keys(&mut model, &mut ctx, &[Key::Char('/')]);
    text(&mut model, &mut ctx, "span");
    let names: Vec<&str> = model.library.visible().iter().map(|&i| model.library.entries[i].name.as_str()).collect();
    assert_eq!(names, ["flue-gas-span", "nox-span-premix"]);
    keys(&mut model, &mut ctx, &[Key::Esc]);
    assert_eq!(model.library.visible().len(), 7);
}

#[test]
fn editing_an_amount_recomputes_and_undo_redo_restore_it() {
    let (mut model, mut ctx, _dir) = setup("edit");
    open(&mut model, &mut ctx, "flue-gas-span");
    let before = model.doc.as_ref().unwrap().computed.plan.as_ref().unwrap().totals.amount_mol;
    go_to_component(&mut model, &mut ctx, "CO2");
    keys(&mut model, &mut ctx, &[Key::Enter, Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "14%");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    let doc = model.doc.as_ref().unwrap();
    assert_eq!(doc.recipe.components[2].amount, "14%");
    assert!(doc.dirty());
    let after = doc.computed.plan.as_ref().unwrap().totals.amount_mol;
    assert!((after - before).abs() > 0.01, "the plan was recomputed: {before} → {after}");
    keys(&mut model, &mut ctx, &[Key::Char('u')]);
    assert_eq!(model.doc.as_ref().unwrap().recipe.components[2].amount, "15%");
    assert!(!model.doc.as_ref().unwrap().dirty());
    keys(&mut model, &mut ctx, &[Key::Ctrl('r')]);
    assert_eq!(model.doc.as_ref().unwrap().recipe.components[2].amount, "14%");
    // Esc while typing keeps the old value.
    keys(&mut model, &mut ctx, &[Key::Enter, Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "99%");
    keys(&mut model, &mut ctx, &[Key::Esc]);
    assert_eq!(model.doc.as_ref().unwrap().recipe.components[2].amount, "14%");
}

#[test]
fn bad_input_is_shown_and_nothing_is_lost() {
    let (mut model, mut ctx, _dir) = setup("bad");
    open(&mut model, &mut ctx, "flue-gas-span");
    go_to_component(&mut model, &mut ctx, "CO2");
    keys(&mut model, &mut ctx, &[Key::Enter, Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "115%");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    let doc = model.doc.as_ref().unwrap();
    assert_eq!(doc.recipe.components[2].amount, "115%", "what was typed is kept");
    assert!(doc.computed.plan.as_ref().unwrap_err().contains("above 100 %"));
    assert!(model.status.contains("not plannable yet"));
    // Saving it asks first and says what is wrong; declining writes nothing.
    let on_disk = ctx.library.open("flue-gas-span").unwrap().text;
    keys(&mut model, &mut ctx, &[Key::Char('s')]);
    match &model.overlay {
        Overlay::ConfirmSaveInvalid { why, .. } => assert!(why.contains("above 100 %"), "{why}"),
        other => panic!("{other:?}"),
    }
    keys(&mut model, &mut ctx, &[Key::Char('n')]);
    assert_eq!(ctx.library.open("flue-gas-span").unwrap().text, on_disk);
    assert!(model.status.contains("not saved"), "{}", model.status);
    // Confirming saves it as typed.
    keys(&mut model, &mut ctx, &[Key::Char('s'), Key::Char('y')]);
    assert_eq!(model.status, "saved rev 2");
    assert_eq!(ctx.library.open("flue-gas-span").unwrap().recipe.components[2].amount, "115%");
}

#[test]
fn adding_a_gas_through_the_picker() {
    let (mut model, mut ctx, _dir) = setup("picker");
    open(&mut model, &mut ctx, "flue-gas-span");
    keys(&mut model, &mut ctx, &[Key::Char('a')]);
    assert!(matches!(model.overlay, Overlay::Picker { .. }));
    text(&mut model, &mut ctx, "argon");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    // No amount is assumed: until one is typed the recipe does not plan, and says why.
    let doc = model.doc.as_ref().unwrap();
    assert_eq!(doc.recipe.components.iter().find(|c| c.gas == "Ar").unwrap().amount, "");
    let why = doc.computed.plan.as_ref().map(|_| ()).unwrap_err();
    assert!(why.contains("is empty: type an amount"), "{why}");
    text(&mut model, &mut ctx, "0.5%");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    let doc = model.doc.as_ref().unwrap();
    let ar = doc.recipe.components.iter().find(|c| c.gas == "Ar").unwrap();
    assert_eq!(ar.amount, "0.5%");
    assert_eq!(doc.recipe.components.last().unwrap().gas, "N2", "the balance gas stays last");
    assert!(doc.computed.plan.is_ok());
}

#[test]
fn saving_makes_a_revision_and_quitting_guards_unsaved_changes() {
    let (mut model, mut ctx, dir) = setup("save");
    open(&mut model, &mut ctx, "nox-span-premix");
    keys(&mut model, &mut ctx, &[Key::Home]);
    for _ in 0..3 {
        keys(&mut model, &mut ctx, &[Key::Down]);
    }
    keys(&mut model, &mut ctx, &[Key::Enter, Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "90ppm");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    keys(&mut model, &mut ctx, &[Key::Char('q')]);
    assert!(matches!(model.overlay, Overlay::ConfirmQuit));
    keys(&mut model, &mut ctx, &[Key::Char('n')]);
    assert!(!model.quit, "any other key stays");
    keys(&mut model, &mut ctx, &[Key::Char('s')]);
    assert_eq!(model.status, "saved rev 2");
    let text = std::fs::read_to_string(dir.join("library/nox-span-premix.ron")).unwrap();
    assert!(text.contains("amount: \"90ppm\"") && text.contains("revision: 2"));
    keys(&mut model, &mut ctx, &[Key::Char('q')]);
    assert!(model.quit, "nothing unsaved: q quits at once");
}

#[test]
fn a_file_changed_on_disk_is_not_overwritten() {
    let (mut model, mut ctx, dir) = setup("conflict");
    open(&mut model, &mut ctx, "pipeline-ng-9");
    let path = dir.join("library/pipeline-ng-9.ron");
    let other = std::fs::read_to_string(&path).unwrap().replace("\"100bar\"", "\"90bar\"");
    std::fs::write(&path, &other).unwrap();
    keys(&mut model, &mut ctx, &[Key::Home, Key::Enter, Key::Char('!'), Key::Enter, Key::Char('s')]);
    assert!(matches!(model.overlay, Overlay::Conflict));
    assert_eq!(std::fs::read_to_string(&path).unwrap(), other);
    // Save under another name instead.
    typed(&mut model, &mut ctx, 'a', "pipeline-mine");
    assert!(model.status.starts_with("saved as pipeline-mine"), "{}", model.status);
    assert!(dir.join("library/pipeline-mine.ron").is_file());
    assert_eq!(std::fs::read_to_string(&path).unwrap(), other);
}

#[test]
fn views_need_a_recipe_and_tab_cycles_them() {
    let (mut model, mut ctx, _dir) = setup("views");
    keys(&mut model, &mut ctx, &[Key::Tab]);
    assert_eq!(model.view, View::Library);
    assert!(model.status.contains("open a recipe first"));
    open(&mut model, &mut ctx, "lpg-in-methane");
    let mut seen = vec![model.view];
    for _ in 0..5 {
        keys(&mut model, &mut ctx, &[Key::Tab]);
        seen.push(model.view);
    }
    assert_eq!(seen, [View::Editor, View::Sheet, View::Models, View::Checks, View::Library, View::Editor]);
    keys(&mut model, &mut ctx, &[Key::BackTab]);
    assert_eq!(model.view, View::Library);
    keys(&mut model, &mut ctx, &[Key::Char('3')]);
    assert_eq!(model.view, View::Sheet);
    keys(&mut model, &mut ctx, &[Key::Esc]);
    assert_eq!(model.view, View::Sheet, "Esc stays on the Fill sheet");
    keys(&mut model, &mut ctx, &[Key::Char('4'), Key::Esc]);
    assert_eq!(model.view, View::Library);
    keys(&mut model, &mut ctx, &[Key::Char('?')]);
    assert!(matches!(model.overlay, Overlay::Help));
    keys(&mut model, &mut ctx, &[Key::Esc]);
    assert!(matches!(model.overlay, Overlay::None));
}

#[test]
fn the_fill_sheet_corrects_targets_for_the_measured_temperature() {
    let (mut model, mut ctx, _dir) = setup("sheet");
    open(&mut model, &mut ctx, "flue-gas-span");
    keys(&mut model, &mut ctx, &[Key::Char('3'), Key::Char('t'), Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "35C");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    let doc = model.doc.as_ref().unwrap();
    let plan = doc.computed.plan.as_ref().unwrap();
    let last = plan.steps.len() - 1;
    let corrected = doc.bench.live[last].pressure_now_pa.unwrap();
    assert_eq!(corrected, plan.corrected_target_pa(last, 308.15).unwrap());
    assert!(corrected > plan.steps[last].pressure_after_pa, "a warmer cylinder reads higher");
    // The chosen step's reading now, absolute and as a gauge shows it.
    let now0 = doc.bench.live[0].pressure_now_pa.unwrap();
    let ambient = doc.computed.order.as_ref().unwrap().ambient_pa;
    let screen = fillwright::tui::scenes::text(&render(&model, &ctx));
    let said = format!("step 1 now: stop at {:.3} bar abs, {:.3} bar on a gauge", now0 / 1e5, (now0 - ambient) / 1e5);
    assert!(screen.contains(&said), "{said}\n{screen}");
    // Mark the first step done and type the reading reached.
    keys(&mut model, &mut ctx, &[Key::Char(' ')]);
    assert!(model.doc.as_ref().unwrap().bench.done[0]);
    keys(&mut model, &mut ctx, &[Key::Up, Key::Char('r')]);
    text(&mut model, &mut ctx, "0.09bar");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    assert_eq!(model.doc.as_ref().unwrap().bench.actual_pa[0], Some(9000.0));
    // A typing error is reported and changes nothing.
    keys(&mut model, &mut ctx, &[Key::Char('t'), Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "warm");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    assert!(model.status.contains("temperature"), "{}", model.status);
    assert_eq!(model.doc.as_ref().unwrap().bench.measured_k, Some(308.15));
}

#[test]
fn drafts_are_offered_and_recovered() {
    let (mut model, mut ctx, _dir) = setup("drafts");
    let mut recipe = ctx.library.open("laser-co2-he-n2").unwrap().recipe;
    recipe.components[0].amount = "5%".into();
    ctx.write_draft("laser-co2-he-n2", &recipe).unwrap();
    let mut model2 = Model::new("test library".into(), false);
    update::start(&mut model2, &mut ctx);
    assert!(matches!(model2.overlay, Overlay::Drafts { .. }));
    keys(&mut model2, &mut ctx, &[Key::Enter]);
    let doc = model2.doc.as_ref().unwrap();
    assert_eq!(doc.recipe.components[0].amount, "5%");
    assert!(doc.dirty(), "recovered edits are unsaved until saved");
    keys(&mut model2, &mut ctx, &[Key::Char('s')]);
    assert!(ctx.draft_names().is_empty(), "saving clears the draft");
    let _ = &mut model;
}

#[test]
fn library_operations_from_the_screen() {
    let (mut model, mut ctx, dir) = setup("ops");
    keys(&mut model, &mut ctx, &[Key::Char('c'), Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "copy-one");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    assert!(dir.join("library/copy-one.ron").is_file(), "{}", model.status);
    keys(&mut model, &mut ctx, &[Key::Home, Key::Char('d'), Key::Char('y')]);
    assert!(!dir.join("library/copy-one.ron").is_file(), "{}", model.status);
    assert!(model.status.contains(".trash"));
    keys(&mut model, &mut ctx, &[Key::Char('h')]);
    assert!(matches!(model.overlay, Overlay::History { .. }));
}

#[test]
fn history_shows_what_changed_between_two_revisions() {
    let (mut model, mut ctx, _dir) = setup("history");
    open(&mut model, &mut ctx, "flue-gas-span");
    for amount in ["14%", "13%"] {
        go_to_component(&mut model, &mut ctx, "CO2");
        keys(&mut model, &mut ctx, &[Key::Enter, Key::Ctrl('u')]);
        text(&mut model, &mut ctx, amount);
        keys(&mut model, &mut ctx, &[Key::Enter, Key::Char('s')]);
    }
    assert_eq!(model.status, "saved rev 3");
    // In the library, flue-gas-span is the second recipe.
    keys(&mut model, &mut ctx, &[Key::Char('1'), Key::Home, Key::Down, Key::Char('h')]);
    let changes = |m: &Model| match &m.overlay {
        Overlay::History { changes, .. } => changes.clone(),
        other => panic!("{other:?}"),
    };
    // The newest is selected: choose revision 1, compared with the newest.
    keys(&mut model, &mut ctx, &[Key::Up, Key::Up]);
    assert_eq!(changes(&model), vec!["CO2 15 → 13 %"]);
    // Compare from revision 1 to revision 2.
    keys(&mut model, &mut ctx, &[Key::Char(' '), Key::Down]);
    assert_eq!(changes(&model), vec!["CO2 15 → 14 %"]);
    // Restore revision 2 as revision 4.
    keys(&mut model, &mut ctx, &[Key::Char('r')]);
    assert!(model.status.contains("as revision 4"), "{}", model.status);
    // The open editor now holds revision 4, and the next save builds on it (no claim that
    // another bench changed the file).
    let doc = model.doc.as_ref().unwrap();
    assert_eq!(doc.recipe.revision, 4);
    assert!(doc.recipe.components.iter().any(|c| c.gas == "CO2" && c.amount == "14%"));
    keys(&mut model, &mut ctx, &[Key::Char('2')]);
    go_to_component(&mut model, &mut ctx, "CO2");
    keys(&mut model, &mut ctx, &[Key::Enter, Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "12%");
    keys(&mut model, &mut ctx, &[Key::Enter, Key::Char('s')]);
    assert_eq!(model.status, "saved rev 5");
    // With unsaved edits, a restore is refused and the edits stay.
    go_to_component(&mut model, &mut ctx, "CO2");
    keys(&mut model, &mut ctx, &[Key::Enter, Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "11%");
    keys(
        &mut model,
        &mut ctx,
        &[Key::Enter, Key::Char('1'), Key::Home, Key::Down, Key::Char('h'), Key::Up, Key::Char('r')],
    );
    assert!(model.status.contains("unsaved edits"), "{}", model.status);
    assert!(model.doc.as_ref().unwrap().recipe.components.iter().any(|c| c.amount == "11%"));
}

#[test]
fn a_new_recipe_is_saved_as_revision_1_and_bad_names_are_refused() {
    let (mut model, mut ctx, dir) = setup("new");
    typed(&mut model, &mut ctx, 'n', "../escape");
    assert!(model.status.contains("path separator"), "{}", model.status);
    assert!(model.doc.is_none());
    // The refused name keeps the dialog open: what is typed next goes to it, not to the
    // library's one-key commands.
    assert!(matches!(model.overlay, Overlay::Prompt { .. }), "{:?}", model.overlay);
    keys(&mut model, &mut ctx, &[Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "flue-gas-span");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    assert!(model.status.contains("already exists"), "{}", model.status);
    assert!(model.doc.is_none() && matches!(model.overlay, Overlay::Prompt { .. }));
    keys(&mut model, &mut ctx, &[Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "zero-gas");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    assert_eq!(model.view, View::Editor);
    assert!(model.doc.as_ref().unwrap().computed.plan.is_ok(), "a new recipe plans at once");
    keys(&mut model, &mut ctx, &[Key::Char('s')]);
    assert_eq!(model.status, "saved rev 1");
    let text = std::fs::read_to_string(dir.join("library/zero-gas.ron")).unwrap();
    assert!(text.contains("revision: 1,") && text.contains("name: \"zero-gas\""), "{text}");
}

#[test]
fn a_fill_at_the_bench_is_recorded_entry_by_entry_and_continues_after_a_restart() {
    let (mut model, mut ctx, dir) = setup("bench");
    open(&mut model, &mut ctx, "flue-gas-span");
    keys(&mut model, &mut ctx, &[Key::Char('3')]);
    assert_eq!(model.view, View::Sheet);
    // The empty cylinder, then step 1 (CO) with its pressure reading and temperature.
    typed(&mut model, &mut ctx, 'w', "13412.000g");
    assert!(model.status.contains("record FC-10-2291-"), "{}", model.status);
    typed(&mut model, &mut ctx, 't', "21.5C");
    assert!(model.status.contains("(recorded)"), "{}", model.status);
    // A reading below the previous one keeps the prompt open with a message.
    typed(&mut model, &mut ctx, 'w', "13000g");
    assert!(matches!(model.overlay, Overlay::Prompt { .. }), "the dialog stays open");
    assert!(model.status.contains("not above the previous reading"), "{}", model.status);
    keys(&mut model, &mut ctx, &[Key::Ctrl('u')]);
    // The plan's mass of CO is 0.928 g: 13412.928 g after step 1.
    text(&mut model, &mut ctx, "13412.928g");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    assert!(model.status.contains("step 1 weighed"), "{}", model.status);
    let records = dir.join("library/records");
    let file = std::fs::read_dir(&records).unwrap().flatten().find(|e| e.path().is_file()).unwrap().path();
    let saved = std::fs::read_to_string(&file).unwrap();
    assert!(saved.contains("\"13412.928g\"") && saved.contains("temperature: \"21.5C\""), "{saved}");
    assert!(saved.contains("recipe_sha256"), "{saved}");

    // The session ends here (nothing else is saved); a new one continues the fill.
    let mut model = Model::new("test library".into(), false);
    update::start(&mut model, &mut ctx);
    open(&mut model, &mut ctx, "flue-gas-span");
    let doc = model.doc.as_ref().unwrap();
    let rec = doc.bench.record.as_ref().expect("the fill in progress is picked up");
    assert_eq!(rec.record.weighings.len(), 2);
    assert_eq!(doc.bench.done, vec![true, false, false, false]);
    assert_eq!(doc.bench.selected, 1, "the step in progress is selected");
    let progress = doc.bench.progress.as_ref().unwrap();
    assert!(progress.replan.as_ref().unwrap().on_target, "CO within 0.1 % of the plan");

    // Step 2 (CH4) goes 3 % over its 26.59 g: the rest is re-planned and the target
    // can no longer be met within CH4's 1 %rel tolerance.
    keys(&mut model, &mut ctx, &[Key::Char('3'), Key::Char('w')]);
    text(&mut model, &mut ctx, &format!("{}g", 13412.928 + 26.585 * 1.03));
    keys(&mut model, &mut ctx, &[Key::Enter]);
    let doc = model.doc.as_ref().unwrap();
    let replan = doc.bench.progress.as_ref().unwrap().replan.as_ref().unwrap();
    assert_eq!(replan.steps.len(), 2);
    assert!(!replan.on_target, "{:?}", replan.deviations);
    assert!(replan.steps[1].add_amount_mol > 54.65, "more balance to bring the minors back: {:?}", replan.steps);
    // The sheet follows the fill: finished steps as recorded, the rest re-planned, the
    // scale counted on from the last weighing.
    let live = &doc.bench.live;
    let w2 = 13412.928 + 26.585 * 1.03;
    assert!(live[0].finished && live[1].finished && !live[2].finished);
    assert!((live[1].scale_reading_g - w2).abs() < 1e-6 && (live[1].add_mass_g - 26.585 * 1.03).abs() < 1e-6);
    assert!((live[2].add_mass_g - replan.steps[0].add_mass_g).abs() < 1e-9);
    assert!((live[2].scale_reading_g - (w2 + replan.steps[0].add_mass_g)).abs() < 1e-6);
    assert!((live[3].scale_reading_g - live[2].scale_reading_g - replan.steps[1].add_mass_g).abs() < 1e-6);
    assert_eq!(live[3].pressure_after_pa, Some(replan.steps[1].pressure_after_pa));
    assert!(live[3].moved() && live[3].add_mass_g > live[3].planned.0);
    // The reading to stop at is the live one for the cylinder at 21.5 °C, and a reading
    // there is judged on the live plan, not the first one.
    let plan = doc.computed.plan.as_ref().unwrap();
    let now = live[2].pressure_now_pa.unwrap();
    let expected =
        fillwright::plan::corrected_target_pa(&plan.fluid, plan.volume_m3, &replan.steps[0].amounts_after_mol, 294.65);
    assert_eq!(now, expected.unwrap());
    typed(&mut model, &mut ctx, 'r', &format!("{:.4}bar", now / 1e5));
    assert!(model.status.contains("0.000 bar off") || model.status.contains("reached"), "{}", model.status);
    let doc = model.doc.as_ref().unwrap();
    let notes = fillwright::tui::views::sheet::reading_notes(doc, &model.limits, &model.shown, 2);
    assert!(
        notes.iter().all(|(s, n)| *s == fillwright::checks::Severity::Ok && n.contains("0.000 bar off")),
        "{notes:?}"
    );
    let screen = fillwright::tui::scenes::text(&render(&model, &ctx));
    assert!(screen.contains("recorded") && screen.contains("re-planned from the fill record"), "{screen}");
    assert!(screen.contains(&format!("{:.2}", live_scale(&model, 2))), "{screen}");
    // The history keeps every entry as a revision.
    let history = ctx.library.record_history(&doc.bench.record.as_ref().unwrap().id);
    assert!(history.len() >= 3, "{history:?}");
}

fn live_scale(model: &Model, k: usize) -> f64 {
    model.doc.as_ref().unwrap().bench.live[k].scale_reading_g
}

#[test]
fn the_sheets_scale_readings_start_from_the_empty_weight_typed() {
    let (mut model, mut ctx, _dir) = setup("bench-tare");
    open(&mut model, &mut ctx, "flue-gas-span");
    let planned: Vec<(f64, f64)> = {
        let plan = model.doc.as_ref().unwrap().computed.plan.as_ref().unwrap().clone();
        plan.steps.iter().map(|s| (s.add_mass_g, s.scale_reading_g)).collect()
    };
    // The empty cylinder weighs 6 g more than the recipe's tare says.
    let tare = planned[0].1 - planned[0].0;
    keys(&mut model, &mut ctx, &[Key::Char('3'), Key::Char('w')]);
    text(&mut model, &mut ctx, &format!("{:.2}g", tare + 6.0));
    keys(&mut model, &mut ctx, &[Key::Enter]);
    for (k, (_, scale)) in planned.iter().enumerate() {
        assert!((live_scale(&model, k) - (scale + 6.0)).abs() < 1e-6, "step {k}");
    }
    let screen = fillwright::tui::scenes::text(&render(&model, &ctx));
    assert!(screen.contains(&format!("{:.2}", planned[0].1 + 6.0)), "{screen}");
}

#[test]
fn a_record_needs_a_saved_recipe() {
    let (mut model, mut ctx, _dir) = setup("bench-unsaved");
    open(&mut model, &mut ctx, "flue-gas-span");
    keys(&mut model, &mut ctx, &[Key::Down, Key::Down, Key::Char('e')]);
    text(&mut model, &mut ctx, " changed");
    keys(&mut model, &mut ctx, &[Key::Enter, Key::Char('3'), Key::Char('w')]);
    text(&mut model, &mut ctx, "13412g");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    assert!(model.status.contains("save the recipe first"), "{}", model.status);
    assert!(model.doc.as_ref().unwrap().bench.record.is_none());
}

/// A copy of flue-gas-span (working 200 bar) filled to `fill`, opened on the Fill sheet.
fn sheet_of_copy(model: &mut Model, ctx: &mut Context, name: &str, fill: &str) {
    let mut r = ctx.library.open("flue-gas-span").unwrap().recipe;
    r.fill = fillwright::recipe::FillTarget::Pressure(fill.into());
    ctx.library.save_as(name, &r, &stamp()).unwrap();
    update::refresh(model, ctx);
    open(model, ctx, name);
    keys(model, ctx, &[Key::Char('3')]);
}

#[test]
fn a_plan_at_stop_locks_its_steps_until_the_user_confirms() {
    let (mut model, mut ctx, _dir) = setup("stop-lock");
    sheet_of_copy(&mut model, &mut ctx, "over-rated", "230bar");
    assert!(fillwright::tui::views::sheet::first_stop(model.doc.as_ref().unwrap())
        .unwrap()
        .contains("working pressure"));
    let screen = fillwright::tui::scenes::text(&render(&model, &ctx));
    assert!(screen.contains("STOP - do not fill as planned"), "{screen}");
    keys(&mut model, &mut ctx, &[Key::Char(' ')]);
    assert!(matches!(model.overlay, Overlay::ConfirmStop(_)), "{:?}", model.overlay);
    keys(&mut model, &mut ctx, &[Key::Char('n')]);
    assert!(!model.doc.as_ref().unwrap().bench.done[0], "ticked without confirming");
    keys(&mut model, &mut ctx, &[Key::Char('w')]);
    assert!(matches!(model.overlay, Overlay::ConfirmStop(_)), "weighing is locked too");
    keys(&mut model, &mut ctx, &[Key::Char('y'), Key::Char(' ')]);
    assert!(model.doc.as_ref().unwrap().bench.done[0], "{}", model.status);
    // A plan within its rating is not locked.
    let (mut model, mut ctx, _dir) = setup("stop-none");
    sheet_of_copy(&mut model, &mut ctx, "within", "150bar");
    keys(&mut model, &mut ctx, &[Key::Char(' ')]);
    assert!(matches!(model.overlay, Overlay::None));
    assert!(model.doc.as_ref().unwrap().bench.done[0]);
}

fn render(model: &Model, ctx: &Context) -> ratatui::buffer::Buffer {
    let mut terminal = ratatui::Terminal::new(ratatui::backend::TestBackend::new(120, 40)).unwrap();
    terminal.draw(|f| fillwright::tui::view::view(model, &ctx.catalogue, f)).unwrap();
    terminal.backend().buffer().clone()
}

#[test]
fn typed_readings_and_temperatures_are_judged_against_the_rating_and_the_plan() {
    let (mut model, mut ctx, _dir) = setup("readings");
    sheet_of_copy(&mut model, &mut ctx, "near-rated", "195bar");
    let last = model.doc.as_ref().unwrap().bench.done.len() - 1;
    // A cylinder temperature above the service range.
    typed(&mut model, &mut ctx, 't', "90C");
    assert!(model.status.contains("above the highest service temperature"), "{}", model.status);
    assert!(fillwright::tui::scenes::text(&render(&model, &ctx)).contains("above the highest service temperature"));
    // Warm at 35 °C: the last step's target reads above 200 bar and settles to 195 bar.
    typed(&mut model, &mut ctx, 't', "35C");
    let target = model.doc.as_ref().unwrap().bench.live[last].pressure_now_pa.unwrap();
    assert!(target > 200e5, "{target}");
    for _ in 0..last {
        keys(&mut model, &mut ctx, &[Key::Down]);
    }
    typed(&mut model, &mut ctx, 'r', &format!("{:.2}bar", target / 1e5));
    let doc = model.doc.as_ref().unwrap();
    let notes = fillwright::tui::views::sheet::reading_notes(doc, &model.limits, &model.shown, last);
    assert!(notes.iter().any(|(_, n)| n.contains("Normal")), "{notes:?}");
    assert!(notes.iter().all(|(s, _)| *s == fillwright::checks::Severity::Ok), "{notes:?}");
    // 230 bar at 35 °C settles above the working pressure: stop.
    typed(&mut model, &mut ctx, 'r', "230bar");
    assert!(model.status.starts_with("STOP") && model.status.contains("settles to"), "{}", model.status);
    // A reading far below the plan on the first step is flagged.
    for _ in 0..last {
        keys(&mut model, &mut ctx, &[Key::Up]);
    }
    let first_target = model.doc.as_ref().unwrap().bench.live[0].pressure_now_pa.unwrap();
    keys(&mut model, &mut ctx, &[Key::Char('r')]);
    let typed = format!("{:.2}bar", first_target / 1e5 + 20.0);
    text(&mut model, &mut ctx, &typed);
    keys(&mut model, &mut ctx, &[Key::Enter]);
    assert!(model.status.contains("far from the plan"), "{}: {}", typed, model.status);
}

/// A screen on the library at `dir` for session `session`, drafts kept in `drafts`.
fn session_at(dir: &std::path::Path, drafts: &std::path::Path, session: &str) -> (Model, Context) {
    let mut ctx = Context {
        library: Library::at(dir).unwrap(),
        catalogue: Catalogue::built_in(),
        settings: Settings::default().resolve("", "defaults").unwrap(),
        drafts: Some(drafts.to_path_buf()),
        sources: None,
        now: stamp,
        session: session.into(),
        settings_file: None,
        beside: None,
    };
    let mut model = Model::new("test library".into(), false);
    update::start(&mut model, &mut ctx);
    (model, ctx)
}

#[test]
fn drafts_belong_to_a_file_and_a_session() {
    let root = common::temp_dir().join(format!("fillwright-tui-draft-id-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&root);
    let drafts = root.join("drafts");
    let (d1, d2) = (root.join("d1"), root.join("d2"));
    // Two folders, each with its own x.ron.
    for (dir, amount) in [(&d1, "11%"), (&d2, "22%")] {
        let lib = Library::at(dir).unwrap();
        let mut r =
            fillwright::recipe::Recipe::parse(fillwright::recipe::demo::find("laser-co2-he-n2").unwrap(), "demo")
                .unwrap();
        r.components[0].amount = amount.into();
        lib.save_as("x", &r, &stamp()).unwrap();
    }
    // Two sessions of d1/x.ron each end with edits of their own; one of d2/x.ron too.
    let (_, a) = session_at(&d1, &drafts, "101");
    let (_, b) = session_at(&d1, &drafts, "102");
    let (_, c) = session_at(&d2, &drafts, "103");
    let edited = |ctx: &Context, amount: &str| {
        let mut r = ctx.library.open("x").unwrap().recipe;
        r.components[0].amount = amount.into();
        ctx.write_draft("x", &r).unwrap();
    };
    edited(&a, "12%");
    edited(&b, "13%");
    edited(&c, "23%");
    assert_eq!(std::fs::read_dir(&drafts).unwrap().count(), 3, "one draft per session and file");
    // A screen on d1 is offered d1's two drafts, not d2's.
    let (mut m1, mut ctx1) = session_at(&d1, &drafts, "104");
    let Overlay::Drafts { drafts: offered, .. } = &m1.overlay else { panic!("{:?}", m1.overlay) };
    assert_eq!(offered.len(), 2);
    assert!(offered.iter().all(|d| d.file.ends_with("d1/x.ron")), "{offered:?}");
    // Recovering the second and saving writes it into d1/x.ron and clears only that draft.
    keys(&mut m1, &mut ctx1, &[Key::Down, Key::Enter]);
    let recovered = m1.doc.as_ref().unwrap().recipe.components[0].amount.clone();
    assert!(recovered == "12%" || recovered == "13%", "{recovered}");
    keys(&mut m1, &mut ctx1, &[Key::Char('s')]);
    assert_eq!(Library::at(&d1).unwrap().open("x").unwrap().recipe.components[0].amount, recovered);
    assert_eq!(Library::at(&d2).unwrap().open("x").unwrap().recipe.components[0].amount, "22%");
    assert_eq!(ctx1.drafts().len(), 1, "the other session's draft is still there");
    // d2's draft is offered for d2/x.ron, with d2's edit.
    let (m2, _) = session_at(&d2, &drafts, "105");
    let Overlay::Drafts { drafts: offered, .. } = &m2.overlay else { panic!("{:?}", m2.overlay) };
    assert_eq!(offered.len(), 1);
    assert!(offered[0].file.ends_with("d2/x.ron"));
    assert_eq!(fillwright::tui::drafts::read(&offered[0].path).unwrap().components[0].amount, "23%");
}

#[test]
fn a_gas_already_in_the_recipe_is_not_added_twice() {
    let (mut model, mut ctx, _dir) = setup("picker-twice");
    open(&mut model, &mut ctx, "flue-gas-span");
    let before = model.doc.as_ref().unwrap().recipe.components.clone();
    typed(&mut model, &mut ctx, 'a', "carbon monoxide");
    let doc = model.doc.as_ref().unwrap();
    assert_eq!(doc.recipe.components, before, "nothing was added or changed");
    assert!(model.status.contains("already in the recipe"), "{}", model.status);
    let i = doc.recipe.components.iter().position(|c| c.gas == "CO").unwrap();
    assert_eq!(doc.current_field(), fillwright::tui::model::Field::Component(i), "the cursor is on the CO row");
    // Typing now edits that row, and no second CO appears.
    keys(&mut model, &mut ctx, &[Key::Enter, Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "77ppm");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    let doc = model.doc.as_ref().unwrap();
    assert_eq!(doc.recipe.components.iter().filter(|c| c.gas == "CO").count(), 1);
}

#[test]
fn help_stays_visible_at_80_columns_whatever_the_message() {
    let (mut model, mut ctx, _dir) = setup("hints");
    open(&mut model, &mut ctx, "flue-gas-span");
    model.status = "a very long message about what just happened at the bench, longer than the line itself".into();
    let screen = render_at(&model, &ctx, 80, 24);
    let last = screen.lines().last().unwrap().to_string();
    assert!(last.starts_with("? help"), "{last}");
    // The message, longer than the line, is whole on the rows above the keys.
    let mut above: Vec<&str> =
        screen.lines().rev().skip(1).take_while(|l| !l.starts_with('└')).map(str::trim_end).collect();
    above.reverse();
    assert_eq!(above.join(" "), model.status, "{screen}");
    // Without a message, the most important keys come first and the rest fit the width.
    model.status.clear();
    let screen = render_at(&model, &ctx, 80, 24);
    let last = screen.lines().last().unwrap().trim_end().to_string();
    assert!(last.starts_with("? help · Enter edit · s save · q quit"), "{last}");
    assert!(last.chars().count() <= 80);
    let _ = &mut ctx;
}

#[test]
fn changing_fill_by_converts_the_value_with_the_plan() {
    use fillwright::recipe::FillTarget;
    use fillwright::tui::model::{fields, Field};
    let (mut model, mut ctx, _dir) = setup("fill-by");
    open(&mut model, &mut ctx, "flue-gas-span");
    let before = model.doc.as_ref().unwrap().computed.plan.as_ref().unwrap().totals.clone();
    let doc = model.doc.as_mut().unwrap();
    doc.field = fields(&doc.recipe).iter().position(|f| *f == Field::FillKind).unwrap();
    // Enter asks first, with what the fill becomes; any other key keeps it.
    keys(&mut model, &mut ctx, &[Key::Enter]);
    match &model.overlay {
        Overlay::ConfirmFillKind(said) => {
            assert!(said.starts_with("Fill by mass instead of pressure: 1996.") && said.contains('g'), "{said}")
        }
        other => panic!("{other:?}"),
    }
    keys(&mut model, &mut ctx, &[Key::Char('n')]);
    assert!(matches!(model.doc.as_ref().unwrap().recipe.fill, FillTarget::Pressure(_)));
    assert!(model.status.contains("unchanged"), "{}", model.status);
    for _ in 0..3 {
        keys(&mut model, &mut ctx, &[Key::Enter, Key::Char('y')]);
        let doc = model.doc.as_ref().unwrap();
        let t = &doc.computed.plan.as_ref().unwrap_or_else(|e| panic!("{e}: {:?}", doc.recipe.fill)).totals;
        // The same fill, whichever way it is stated (six significant digits).
        assert!((t.amount_mol / before.amount_mol - 1.0).abs() < 1e-5, "{:?}", doc.recipe.fill);
    }
    assert!(matches!(model.doc.as_ref().unwrap().recipe.fill, FillTarget::Pressure(ref p) if p == "150bar"));
}

#[test]
fn library_search_finds_order_serial_and_gases() {
    let (mut model, mut ctx, _dir) = setup("search-more");
    let names =
        |m: &Model| -> Vec<String> { m.library.visible().iter().map(|&i| m.library.entries[i].name.clone()).collect() };
    keys(&mut model, &mut ctx, &[Key::Char('/')]);
    text(&mut model, &mut ctx, "brw-2026-0117");
    assert_eq!(names(&model), ["flue-gas-span"], "by order reference");
    keys(&mut model, &mut ctx, &[Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "FC-10-1555");
    assert_eq!(names(&model), ["pipeline-ng-9"], "by cylinder serial");
    keys(&mut model, &mut ctx, &[Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "n-c4h10 c3h8");
    let found = names(&model);
    assert!(found.contains(&"lpg-in-methane".to_string()) && found.contains(&"pipeline-ng-9".to_string()), "{found:?}");
    assert!(!found.contains(&"flue-gas-span".to_string()), "every word must match: {found:?}");
}

#[test]
fn the_fill_sheet_is_written_for_the_bench_folder() {
    let (mut model, mut ctx, dir) = setup("print");
    open(&mut model, &mut ctx, "flue-gas-span");
    keys(&mut model, &mut ctx, &[Key::Char('3'), Key::Char('p')]);
    let path = dir.join("library/sheets/flue-gas-span-rev1.txt");
    assert!(model.status.contains("sheets"), "{}", model.status);
    let text = std::fs::read_to_string(&path).unwrap();
    assert!(text.starts_with("FILL SHEET  Flue-gas span"), "{text}");
    assert!(text.contains("STEPS") && text.contains("CAUTION"), "{text}");
    // The printed sheet has the comparison the screen leaves out of its recompute.
    assert!(text.contains("STOPPING AT EACH MODEL'S READINGS"), "{text}");
    assert!(model.doc.as_ref().unwrap().computed.plan.as_ref().unwrap().following.is_empty());
    // Room to write the readings by hand, a row per step, and the blend's cautions.
    let form = &text[text.find("READINGS AT THE BENCH").expect("the bench form")..];
    let steps = model.doc.as_ref().unwrap().computed.plan.as_ref().unwrap().steps.len();
    assert_eq!(form.lines().filter(|l| l.contains("__________")).count(), steps + 1, "{form}");
    assert!(form.contains("CAUTIONS") && form.contains("Follow local codes"), "{form}");
    assert!(!form.contains("oxygen-clean"), "no oxidiser in this blend: {form}");
    assert!(text.lines().all(|l| l.chars().count() <= 80), "the sheet stays within 80 columns");
    // And as a PDF for the printer, holding the same stop readings.
    let pdf = path.with_extension("pdf");
    let back = common::pdf_text(&pdf);
    assert!(back.contains("FILL SHEET") && back.contains("Flue-gas span"), "{back}");
    let stops: Vec<&str> = text.lines().filter(|l| l.trim_start().starts_with("1  CO ")).collect();
    assert!(!stops.is_empty());
    for l in stops {
        let stop = l.split_whitespace().nth(5).unwrap();
        assert!(back.contains(stop), "{stop} missing from the PDF");
    }
    // The sheets folder is not mistaken for recipes.
    update::refresh(&mut model, &ctx);
    assert!(model.library.entries.iter().all(|e| e.summary.is_ok()));
}

#[test]
fn enter_in_the_gas_picker_with_no_match_says_so_and_stays() {
    let (mut model, mut ctx, _dir) = setup("picker-none");
    open(&mut model, &mut ctx, "flue-gas-span");
    typed(&mut model, &mut ctx, 'a', "unobtainium");
    assert!(matches!(model.overlay, Overlay::Picker { .. }));
    assert!(model.status.contains("no gas matches"), "{}", model.status);
}

#[test]
fn the_title_shows_the_revision_on_disk_after_undoing_past_a_save() {
    let (mut model, mut ctx, _dir) = setup("undo-title");
    open(&mut model, &mut ctx, "flue-gas-span");
    go_to_component(&mut model, &mut ctx, "CO2");
    keys(&mut model, &mut ctx, &[Key::Enter, Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "14%");
    keys(&mut model, &mut ctx, &[Key::Enter, Key::Char('s')]);
    assert_eq!(model.status, "saved rev 2");
    keys(&mut model, &mut ctx, &[Key::Char('u')]);
    let screen = fillwright::tui::scenes::text(&render(&model, &ctx));
    assert!(screen.contains("flue-gas-span rev 2"), "{screen}");
    assert!(!screen.contains("rev 1"), "{screen}");
}

#[test]
fn the_settings_editor_writes_settings_ron_and_the_screen_follows() {
    use fillwright::settings::Settings;
    let (mut model, mut ctx, dir) = setup("settings-editor");
    let file = dir.join("settings.ron");
    keys(&mut model, &mut ctx, &[Key::Char('o')]);
    assert!(matches!(model.overlay, Overlay::Settings { .. }));
    // The pressure unit cycles bar -> psi, written at once, and the screen shows psi.
    keys(&mut model, &mut ctx, &[Key::Enter]);
    let written = Settings::parse(&std::fs::read_to_string(&file).unwrap(), "settings.ron").unwrap();
    assert_eq!(written.pressure_unit, fillwright::units::PressureUnit::Psi);
    assert_eq!(model.shown.pressure, fillwright::units::PressureUnit::Psi);
    // A typed value: the condensation margin (the 9th field).
    for _ in 0..8 {
        keys(&mut model, &mut ctx, &[Key::Down]);
    }
    keys(&mut model, &mut ctx, &[Key::Enter, Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "8K");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    assert_eq!(ctx.settings.condensation_margin_k, 8.0, "{}", model.status);
    // A refused value keeps the prompt and writes nothing: storage above service.
    let before = std::fs::read_to_string(&file).unwrap();
    for _ in 0..2 {
        keys(&mut model, &mut ctx, &[Key::Up]);
    }
    keys(&mut model, &mut ctx, &[Key::Enter, Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "80C");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    assert!(matches!(model.overlay, Overlay::Prompt { .. }), "{:?}", model.overlay);
    assert!(model.status.contains("not below"), "{}", model.status);
    assert_eq!(std::fs::read_to_string(&file).unwrap(), before);
    // The file still reads with every field the editor wrote.
    let r = Settings::parse(&before, "settings.ron").unwrap().resolve(&before, "settings.ron").unwrap();
    assert_eq!(r.condensation_margin_k, 8.0);
}

#[test]
fn the_screening_cursor_stays_on_its_check_when_the_list_resorts() {
    use fillwright::tui::model::{fields, Field};
    let (mut model, mut ctx, _dir) = setup("screen-cursor");
    open(&mut model, &mut ctx, "flue-gas-span");
    keys(&mut model, &mut ctx, &[Key::Char('5'), Key::Down, Key::Down, Key::Down]);
    let chosen = |m: &Model| {
        let checks = m.doc.as_ref().unwrap().computed.checks.as_ref().unwrap();
        checks[m.check_selected.unwrap()].id
    };
    let before = chosen(&model);
    // Fill above the working pressure: the rating moves to the top of the list.
    keys(&mut model, &mut ctx, &[Key::Char('2')]);
    let doc = model.doc.as_mut().unwrap();
    doc.field = fields(&doc.recipe).iter().position(|f| *f == Field::FillValue).unwrap();
    keys(&mut model, &mut ctx, &[Key::Enter, Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "230bar");
    keys(&mut model, &mut ctx, &[Key::Enter, Key::Char('5')]);
    let checks = model.doc.as_ref().unwrap().computed.checks.clone().unwrap();
    let top = fillwright::tui::model::checks_worst_first(&checks)[0];
    assert_eq!(checks[top].id, "pressure-rating", "the list re-sorted");
    assert_eq!(chosen(&model), before, "the cursor stayed on its check");
    let screen = fillwright::tui::scenes::text(&render(&model, &ctx));
    let marked = screen.lines().find(|l| l.contains('▶')).unwrap_or_default().to_string();
    assert!(marked.contains(before), "{marked}");
}

#[test]
fn screen_messages_use_the_editors_labels_not_the_files_keys() {
    use fillwright::tui::model::{fields, Field};
    let (mut model, mut ctx, _dir) = setup("labels");
    open(&mut model, &mut ctx, "flue-gas-span");
    let doc = model.doc.as_mut().unwrap();
    doc.field = fields(&doc.recipe).iter().position(|f| *f == Field::WaterCapacity).unwrap();
    keys(&mut model, &mut ctx, &[Key::Enter, Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "-10L");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    let e = model.doc.as_ref().unwrap().computed.order.as_ref().unwrap_err().clone();
    assert!(e.contains("water capacity") && !e.contains("water_capacity"), "{e}");
    assert!(model.status.contains("water capacity"), "{}", model.status);
}

#[test]
fn a_premix_name_cut_in_the_sheet_is_given_whole_for_the_chosen_step() {
    let (mut model, mut ctx, _dir) = setup("premix-name");
    open(&mut model, &mut ctx, "nox-span-premix");
    keys(&mut model, &mut ctx, &[Key::Char('3')]);
    let steps: Vec<String> =
        model.doc.as_ref().unwrap().computed.plan.as_ref().unwrap().steps.iter().map(|s| s.source.clone()).collect();
    let k = steps.iter().position(|s| s == "NO 1% in N2").unwrap();
    for _ in 0..k {
        keys(&mut model, &mut ctx, &[Key::Down]);
    }
    // At 80 columns the table cuts it, and the line under the table gives it whole.
    let screen = render_at(&model, &ctx, 80, 24);
    assert!(screen.contains(&format!("step {} source: NO 1% in N2", k + 1)), "{screen}");
    // A wide window has room for it in the table itself.
    let screen = fillwright::tui::scenes::text(&render(&model, &ctx));
    assert!(screen.contains(&format!("{}  NO 1% in N2  ", k + 1)), "{screen}");
}

#[test]
fn a_deleted_recipe_comes_back_from_the_trash_on_the_screen() {
    let (mut model, mut ctx, dir) = setup("trash");
    keys(&mut model, &mut ctx, &[Key::Char('t')]);
    assert_eq!(model.status, "the trash is empty");
    ctx.library.delete("laser-co2-he-n2", &stamp()).unwrap();
    update::refresh(&mut model, &ctx);
    keys(&mut model, &mut ctx, &[Key::Char('t')]);
    match &model.overlay {
        Overlay::Trash { entries, .. } => assert_eq!(entries[0].0, "laser-co2-he-n2"),
        other => panic!("{other:?}"),
    }
    keys(&mut model, &mut ctx, &[Key::Enter]);
    assert!(model.status.contains("is back"), "{}", model.status);
    assert!(dir.join("library/laser-co2-he-n2.ron").is_file());
    assert!(model.library.entries.iter().any(|e| e.name == "laser-co2-he-n2"));
}

#[test]
fn the_result_pane_at_80_by_24_keeps_its_columns_whole() {
    let dir = common::temp_dir().join(format!("fillwright-tui-r60-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    let scenes = fillwright::tui::scenes::scenes();
    let (_, editor) = scenes.iter().find(|(n, _)| *n == "editor").unwrap();
    let screen = fillwright::tui::scenes::text(&fillwright::tui::scenes::render(&dir, editor.as_ref(), 80, 24, false));
    // Each step's row holds its source and its stop reading on one line.
    for gas in ["CO ", "CH4", "CO2", "N2 "] {
        let row = screen.lines().find(|l| l.contains(&format!("││{gas}"))).unwrap_or_else(|| panic!("{gas}: {screen}"));
        let right = row.split("││").nth(1).unwrap();
        assert!(
            right.split_whitespace().nth(1).is_some_and(|v| v.trim_end_matches(['!', '│']).parse::<f64>().is_ok()),
            "{row}"
        );
    }
    // And no column of the steps spills onto a line of its own (a wrapped scale reading).
    let right: Vec<&str> = screen.lines().filter_map(|l| l.split("││").nth(1)).collect();
    let start = right.iter().position(|l| l.starts_with("add")).unwrap();
    let end = right.iter().position(|l| l.starts_with("readings for")).unwrap();
    for line in &right[start + 1..end] {
        let first = line.split_whitespace().next().unwrap_or("");
        assert!(first.trim_end_matches(['!', '│']).parse::<f64>().is_err(), "a wrapped number: {line}");
    }
}

#[test]
fn the_cylinder_before_the_fill_is_edited_on_one_line_and_the_sheet_starts_from_it() {
    use fillwright::recipe::BeforeFill;
    use fillwright::tui::model::{fields, Field};
    let (mut model, mut ctx, _dir) = setup("heel");
    open(&mut model, &mut ctx, "flue-gas-span");
    let doc = model.doc.as_mut().unwrap();
    doc.field = fields(&doc.recipe).iter().position(|f| *f == Field::BeforeFill).unwrap();
    keys(&mut model, &mut ctx, &[Key::Enter, Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "some nitrogen");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    // Not read: the entry stays open with what was typed, and the message says what reads.
    let doc = model.doc.as_ref().unwrap();
    assert!(doc.editing.as_ref().is_some_and(|i| i.value() == "some nitrogen"));
    assert!(model.status.contains("accepted"), "{}", model.status);
    keys(&mut model, &mut ctx, &[Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "N2 at 10bar");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    let doc = model.doc.as_ref().unwrap();
    assert_eq!(
        doc.recipe.before_fill,
        Some(BeforeFill::Heel { mix: "N2".into(), pressure: "10bar".into(), temperature: None })
    );
    let plan = doc.computed.plan.as_ref().unwrap();
    assert!(plan.heel.is_some());
    keys(&mut model, &mut ctx, &[Key::Char('3')]);
    let screen = fillwright::tui::scenes::text(&render(&model, &ctx));
    assert!(screen.lines().any(|l| l.contains(" 0  heel") && l.contains("10.000")), "{screen}");
    // A fill record would leave the heel out of the certificate: it is refused, saying why.
    keys(&mut model, &mut ctx, &[Key::Char('s'), Key::Char('w')]);
    text(&mut model, &mut ctx, "13500g");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    assert!(model.status.contains("heel"), "{}", model.status);
    assert!(model.doc.as_ref().unwrap().bench.record.is_none());
}

#[test]
fn a_proposed_premix_is_shown_and_accepted_as_library_recipes() {
    use fillwright::recipe::SourceLine;
    let (mut model, mut ctx, _dir) = setup("premix-accept");
    open(&mut model, &mut ctx, "flue-gas-span");
    keys(&mut model, &mut ctx, &[Key::Char('3'), Key::Char('m')]);
    assert!(matches!(model.overlay, Overlay::Premixes { selected: 0, .. }));
    let screen = fillwright::tui::scenes::text(&render(&model, &ctx));
    assert!(screen.contains("dose it from CO 1 % in N2") && screen.contains("a  accept"), "{screen}");
    keys(&mut model, &mut ctx, &[Key::Char('a')]);
    assert!(model.status.contains("accepted") && model.status.contains("saved premix-CO-1%-in-N2"), "{}", model.status);
    assert!(ctx.library.open("premix-CO-1%-in-N2").is_ok());
    let doc = model.doc.as_ref().unwrap();
    assert!(doc.recipe.sources.iter().any(|s| matches!(s,
        SourceLine::Premix { recipe: Some(r), .. } if r == "premix-CO-1%-in-N2")));
    assert!(doc.dirty(), "the blend's change waits for s");
    let plan = doc.computed.plan.as_ref().unwrap();
    assert!(plan.premixes.is_empty(), "the premix step is dosable now");
    // Undone and accepted again, the stage already in the library is linked, not copied.
    keys(&mut model, &mut ctx, &[Key::Char('2'), Key::Char('u'), Key::Char('3'), Key::Char('m'), Key::Char('a')]);
    assert!(model.status.contains("linked premix-CO-1%-in-N2"), "{}", model.status);
    // A recipe with nothing too small says so.
    let (mut model, mut ctx, _dir) = setup("premix-none");
    open(&mut model, &mut ctx, "laser-co2-he-n2");
    keys(&mut model, &mut ctx, &[Key::Char('3'), Key::Char('m')]);
    assert!(matches!(model.overlay, Overlay::None));
    assert!(model.status.contains("no step needs a premix"), "{}", model.status);
}

#[test]
fn light_edits_reuse_the_heavy_results_and_a_tare_moves_only_the_scale_readings() {
    use fillwright::tui::model::{fields, Field};
    let (mut model, mut ctx, _dir) = setup("reuse");
    open(&mut model, &mut ctx, "flue-gas-span");
    let before = model.doc.as_ref().unwrap().computed.clone();
    let set = |model: &mut Model, ctx: &mut Context, field: Field, text_in: &str| {
        let doc = model.doc.as_mut().unwrap();
        doc.field = fields(&doc.recipe).iter().position(|f| *f == field).unwrap();
        keys(model, ctx, &[Key::Enter, Key::Ctrl('u')]);
        text(model, ctx, text_in);
        keys(model, ctx, &[Key::Enter]);
    };
    set(&mut model, &mut ctx, Field::Notes, "for the Brackwater audit");
    let c = &model.doc.as_ref().unwrap().computed;
    assert!(c.reused, "a note does not recompute the plan");
    set(&mut model, &mut ctx, Field::Serial, "FC-10-9999");
    assert!(model.doc.as_ref().unwrap().computed.reused);
    // The demo's tare is 13.412 kg; 100 g more moves every scale reading by 100 g.
    set(&mut model, &mut ctx, Field::Tare, "13.512kg");
    let c = &model.doc.as_ref().unwrap().computed;
    assert!(c.reused);
    let (a, b) = (before.plan.as_ref().unwrap(), c.plan.as_ref().unwrap());
    for (s, t) in a.steps.iter().zip(&b.steps) {
        assert!((t.scale_reading_g - s.scale_reading_g - 100.0).abs() < 1e-9);
        assert_eq!(t.pressure_after_pa, s.pressure_after_pa);
    }
    // The reused results are what a full recompute gives.
    let doc = model.doc.as_ref().unwrap();
    let fresh = fillwright::tui::model::Computed::of(&doc.recipe, &ctx.catalogue, &ctx.settings);
    let f = fresh.plan.as_ref().unwrap();
    for (s, t) in f.steps.iter().zip(&b.steps) {
        assert!((s.scale_reading_g - t.scale_reading_g).abs() < 1e-9 && s.pressure_after_pa == t.pressure_after_pa);
    }
    assert_eq!(fresh.checks, c.checks);
    // An amount is a heavy input.
    go_to_component(&mut model, &mut ctx, "CO2");
    keys(&mut model, &mut ctx, &[Key::Enter, Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "14%");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    assert!(!model.doc.as_ref().unwrap().computed.reused);
}

#[test]
fn the_library_shows_each_recipes_worst_check() {
    let (model, ctx, _dir) = setup("library-checks");
    let screen = fillwright::tui::scenes::text(&render(&model, &ctx));
    assert!(screen.contains("checks"), "{screen}");
    // One result per entry, in the order of the list, each the worst of its own screening.
    assert_eq!(model.library.screening.len(), model.library.entries.len());
    for (e, s) in model.library.entries.iter().zip(&model.library.screening) {
        let recipe = ctx.library.open(&e.name).unwrap().recipe;
        let own = fillwright::tui::model::Computed::of(&recipe, &ctx.catalogue, &ctx.settings);
        assert_eq!(*s, own.checks.as_ref().map(|c| fillwright::checks::worst(c)), "{}", e.name);
    }
    assert!(model.library.screening.iter().any(|s| s.is_some()));
    // A recipe changed on disk is screened again at the next refresh; the others keep theirs.
    let mut model = model;
    let i = model.library.entries.iter().position(|e| e.name == "flue-gas-span").unwrap();
    assert_ne!(model.library.screening[i], Some(fillwright::checks::Severity::Stop));
    let path = model.library.entries[i].path.clone();
    let text = std::fs::read_to_string(&path).unwrap().replace("Pressure(\"150bar\")", "Pressure(\"250bar\")");
    assert!(text.contains("250bar"));
    std::fs::write(&path, text).unwrap();
    let others = model.library.screening.clone();
    update::refresh(&mut model, &ctx);
    assert_eq!(model.library.screening[i], Some(fillwright::checks::Severity::Stop), "above the working pressure");
    for (k, s) in model.library.screening.iter().enumerate() {
        if k != i {
            assert_eq!(*s, others[k]);
        }
    }
}

#[test]
fn a_long_cascade_at_80_by_24_still_shows_how_to_accept_it() {
    let (mut model, mut ctx, dir) = setup("cascade-80");
    let text = r#"Recipe(format: 1, name: "h2s-trace", components: [(gas: "H2S", amount: "50ppb"),
        (gas: "N2", amount: "balance")], cylinder: (water_capacity: "10L", working_pressure: "200bar",
        test_pressure: "300bar"), fill: Pressure("150bar"))"#;
    std::fs::write(dir.join("library/h2s-trace.ron"), text).unwrap();
    update::refresh(&mut model, &ctx);
    open(&mut model, &mut ctx, "h2s-trace");
    keys(&mut model, &mut ctx, &[Key::Char('3'), Key::Char('m')]);
    let stages = match &model.doc.as_ref().unwrap().computed.plan {
        Ok(p) => p.premixes[0].stages.len(),
        Err(e) => panic!("{e}"),
    };
    assert!(stages >= 3, "{stages}");
    let screen = render_at(&model, &ctx, 80, 24);
    assert!(screen.contains("a  accept"), "{screen}");
    assert!(screen.contains("PREMIX PROPOSED"), "{screen}");
    // It says it scrolls, and does: the foot of the cascade comes into view.
    assert!(screen.contains("scroll: lines 1-"), "{screen}");
    let foot = "a finer";
    assert!(!screen.contains(foot) || stages < 4, "{screen}");
    for _ in 0..3 {
        keys(&mut model, &mut ctx, &[Key::PageDown]);
    }
    let Overlay::Premixes { scroll, .. } = model.overlay else { panic!() };
    assert!(scroll >= 20, "{scroll}");
    let screen = render_at(&model, &ctx, 80, 24);
    assert!(!screen.contains("scroll: lines 1-") && screen.contains("go into the blend"), "{screen}");
    keys(&mut model, &mut ctx, &[Key::Home]);
    assert!(matches!(model.overlay, Overlay::Premixes { scroll: 0, .. }));
}

#[test]
fn a_tare_edit_moves_the_heels_scale_reading_with_the_steps() {
    use fillwright::tui::model::{fields, Field};
    let (mut model, mut ctx, _dir) = setup("heel-tare");
    open(&mut model, &mut ctx, "flue-gas-span");
    for (field, value) in [(Field::BeforeFill, "N2 at 10bar"), (Field::Tare, "13.512kg")] {
        let doc = model.doc.as_mut().unwrap();
        doc.field = fields(&doc.recipe).iter().position(|f| *f == field).unwrap();
        keys(&mut model, &mut ctx, &[Key::Enter, Key::Ctrl('u')]);
        text(&mut model, &mut ctx, value);
        keys(&mut model, &mut ctx, &[Key::Enter]);
    }
    let doc = model.doc.as_ref().unwrap();
    assert!(doc.computed.reused, "the tare reuses the plan");
    let heel = doc.computed.plan.as_ref().unwrap().heel.clone().unwrap();
    let fresh = fillwright::tui::model::Computed::of(&doc.recipe, &ctx.catalogue, &ctx.settings);
    let want = fresh.plan.unwrap().heel.unwrap();
    assert!(
        (heel.scale_reading_g - want.scale_reading_g).abs() < 1e-9,
        "{} vs {}",
        heel.scale_reading_g,
        want.scale_reading_g
    );
    assert!((heel.scale_reading_g - (13512.0 + heel.mass_g)).abs() < 1e-9);
}

/// The flue-gas record, finished, in the library's records/.
fn place_flue_record(ctx: &Context) {
    let text = std::fs::read_to_string("tests/records/flue-gas-made.ron")
        .unwrap()
        .replace("recipe_revision: 1,", "recipe_revision: 1,\n    finished: \"2026-12-02T10:00:00Z\",");
    let records = ctx.library.dir().join("records");
    std::fs::create_dir_all(&records).unwrap();
    std::fs::write(records.join("FC-10-2291-20261202.ron"), text).unwrap();
}

#[test]
fn a_verification_is_typed_on_the_screen_written_as_typed_and_judged() {
    use fillwright::tui::overlays::verification;
    let (mut model, mut ctx, _dir) = setup("verify");
    place_flue_record(&ctx);
    keys(&mut model, &mut ctx, &[Key::Char('v')]);
    assert!(model.verification.is_some());
    typed(&mut model, &mut ctx, 'n', "FC-10-2291-20261202 carbon dioxide");
    let file = ctx.library.dir().join("verifications/FC-10-2291-20261202-CO2.ron");
    assert!(file.is_file(), "{}", model.verification.as_ref().unwrap().status);
    // Three reference mixtures: Enter on "add" types the content, → the response.
    for (content, response) in [
        ("12.002%±0.004%", "1.20020±0.00030"),
        ("14.010%±0.004%", "1.40095±0.00030"),
        ("16.005%±0.005%", "1.60054±0.00030"),
    ] {
        keys(
            &mut model,
            &mut ctx,
            &[Key::Down, Key::Down, Key::Down, Key::Down, Key::Down, Key::Down, Key::Up, Key::Enter],
        );
        text(&mut model, &mut ctx, content);
        keys(&mut model, &mut ctx, &[Key::Enter, Key::Right, Key::Enter, Key::Ctrl('u')]);
        text(&mut model, &mut ctx, response);
        keys(&mut model, &mut ctx, &[Key::Enter]);
        // Written at once, as typed.
        let saved = std::fs::read_to_string(&file).unwrap();
        assert!(saved.contains(content) && saved.contains(response), "{saved}");
    }
    // The sample's response as three repeats, on the last line.
    keys(&mut model, &mut ctx, &[Key::End, Key::Down, Key::Down, Key::Right, Key::Enter]);
    text(&mut model, &mut ctx, "1.4640, 1.4644, 1.4641");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    let pane = model.verification.as_ref().unwrap();
    let e = verification::editing(pane).expect("editing the file");
    let report = e.outcome.as_ref().unwrap_or_else(|why| panic!("{why}"));
    assert_eq!(report.checked.points.len(), 3);
    assert_eq!(report.checked.repeats.len(), 3);
    assert_eq!(report.checked.sample_record.as_deref(), Some("FC-10-2291-20261202"));
    // The record's CO2 is about 14.64 %: the analyser's 14.64 % agrees.
    assert!(report.consistent, "{report:?}");
    // Each write kept the text it replaced.
    let history = ctx.library.dir().join("verifications/.history/FC-10-2291-20261202-CO2");
    assert!(std::fs::read_dir(history).unwrap().count() >= 6);
    // A bad value is written as typed and explained, not lost.
    keys(&mut model, &mut ctx, &[Key::Enter, Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "1.4640");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    let pane = model.verification.as_ref().unwrap();
    assert!(pane.status.contains("no uncertainty"), "{}", pane.status);
    assert!(std::fs::read_to_string(&file).unwrap().contains("response: \"1.4640\""));
    // Esc goes back to the list, Esc again closes the pane.
    keys(&mut model, &mut ctx, &[Key::Esc, Key::Esc]);
    assert!(model.verification.is_none());
}

/// The Fill sheet of a demo recipe, opened and saved as is.
fn on_sheet(tag: &str, name: &str) -> (Model, Context, PathBuf) {
    let (mut model, mut ctx, dir) = setup(tag);
    open(&mut model, &mut ctx, name);
    keys(&mut model, &mut ctx, &[Key::Char('3')]);
    (model, ctx, dir)
}

fn typed(model: &mut Model, ctx: &mut Context, key: char, value: &str) {
    keys(model, ctx, &[Key::Char(key)]);
    text(model, ctx, value);
    keys(model, ctx, &[Key::Enter]);
}

fn record_of(model: &Model) -> fillwright::record::Record {
    model.doc.as_ref().unwrap().bench.record.as_ref().unwrap().record.clone()
}

#[test]
fn a_premix_without_its_analysis_is_asked_for_and_the_analysis_is_written_at_once() {
    let (mut model, mut ctx, _dir) = on_sheet("premix-analysis", "nox-span-premix");
    typed(&mut model, &mut ctx, 'w', "13390.00g");
    // The first addition comes from the premix at its nominal composition: asked at once.
    assert!(
        matches!(&model.overlay, Overlay::Prompt { purpose: fillwright::tui::model::Prompt::StepSource, .. }),
        "{:?}",
        model.overlay
    );
    assert!(model.status.contains("has no uncertainty") && model.status.contains("NO 1% in N2"), "{}", model.status);
    // A nominal answer is still not an analysis; the real one is written to the record now.
    text(&mut model, &mut ctx, "NO=1.0012%±0.0020%,N2=balance");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    assert!(model.status.contains("(recorded)"), "{}", model.status);
    assert_eq!(record_of(&model).additions[0].source, "NO=1.0012%±0.0020%,N2=balance");
    // The session drops before the weighing: a new one shows the analysis for step 1.
    let mut model = Model::new("test library".into(), false);
    update::start(&mut model, &mut ctx);
    open(&mut model, &mut ctx, "nox-span-premix");
    keys(&mut model, &mut ctx, &[Key::Char('3')]);
    assert_eq!(model.doc.as_ref().unwrap().bench.chosen_source.as_deref(), Some("NO=1.0012%±0.0020%,N2=balance"));
    let screen = fillwright::tui::scenes::text(&render(&model, &ctx));
    assert!(screen.contains("NO=1.0012%±0.0020%") && screen.contains("(recorded)"), "{screen}");
    // The weighing keeps it.
    typed(&mut model, &mut ctx, 'w', "13403.82g");
    assert_eq!(record_of(&model).additions[0].source, "NO=1.0012%±0.0020%,N2=balance");
}

#[test]
fn a_slip_is_confirmed_then_corrected_with_its_reason_and_kept_in_the_history() {
    let (mut model, mut ctx, _dir) = on_sheet("slip", "flue-gas-span");
    typed(&mut model, &mut ctx, 'w', "13412.000g");
    typed(&mut model, &mut ctx, 'w', "13412.93g");
    typed(&mut model, &mut ctx, 'w', "13439.51g");
    // CO2: typed in kg where g was meant. Held back the first time, with why.
    typed(&mut model, &mut ctx, 'w', "13877.09kg");
    assert!(matches!(model.overlay, Overlay::Prompt { .. }), "the prompt stays open");
    assert!(
        model.status.contains("the plan's 437.") && model.status.starts_with("Enter again records it"),
        "{}",
        model.status
    );
    assert_eq!(record_of(&model).weighings.len(), 3, "nothing recorded yet");
    // Entered again as typed: recorded (the blender insisted).
    keys(&mut model, &mut ctx, &[Key::Enter]);
    assert_eq!(record_of(&model).weighings.len(), 4);
    // The correct reading is refused as a new weighing; corrected with x instead.
    typed(&mut model, &mut ctx, 'x', "w 3 13877.09g");
    assert!(model.status.contains("why?"), "{}", model.status);
    // No reason: asked again.
    keys(&mut model, &mut ctx, &[Key::Enter]);
    assert!(model.status.contains("needs its reason"), "{}", model.status);
    text(&mut model, &mut ctx, "typed kg for g");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    assert!(model.status.contains("corrected"), "{}", model.status);
    let r = record_of(&model);
    assert_eq!(r.weighings[3], "13877.09g");
    assert_eq!(r.corrections.len(), 1);
    assert_eq!((r.corrections[0].was.as_str(), r.corrections[0].reason.as_str()), ("13877.09kg", "typed kg for g"));
    // The history keeps the record as it was before the correction.
    let id = model.doc.as_ref().unwrap().bench.record.as_ref().unwrap().id.clone();
    let history = ctx.library.record_history(&id);
    assert!(
        history.iter().any(|(_, _, p)| std::fs::read_to_string(p).unwrap().contains("\"13877.09kg\"")),
        "{history:?}"
    );
    // A bad correction keeps its prompt and changes nothing.
    typed(&mut model, &mut ctx, 'x', "w 2 13000g");
    assert!(matches!(model.overlay, Overlay::Prompt { .. }));
    assert!(model.status.contains("between the readings"), "{}", model.status);
    keys(&mut model, &mut ctx, &[Key::Esc]);
    assert_eq!(record_of(&model).corrections.len(), 1);
    // Operator and balance on the screen.
    keys(&mut model, &mut ctx, &[Key::Char('o'), Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "R. Okafor");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    typed(&mut model, &mut ctx, 'b', "BAL-3, calibrated 2026-10-02");
    let r = record_of(&model);
    assert_eq!((r.operator.as_str(), r.balance.as_str()), ("R. Okafor", "BAL-3, calibrated 2026-10-02"));
}

#[test]
fn a_pressure_reading_that_disagrees_with_the_weighing_is_flagged() {
    let (mut model, mut ctx, _dir) = on_sheet("cross", "flue-gas-span");
    typed(&mut model, &mut ctx, 'w', "13412.000g");
    typed(&mut model, &mut ctx, 'w', "13412.93g");
    typed(&mut model, &mut ctx, 't', "22C");
    // CH4: the reading that matches the weighing passes.
    let target = model.doc.as_ref().unwrap().bench.live[1].pressure_now_pa.unwrap();
    typed(&mut model, &mut ctx, 'r', &format!("{:.3}bar", target / 1e5));
    typed(&mut model, &mut ctx, 'w', "13439.51g");
    let prog = model.doc.as_ref().unwrap().bench.progress.clone().unwrap();
    let c = &prog.standing.cross_checks;
    assert_eq!(c.len(), 1, "{c:?}");
    assert!(!c[0].disagrees(), "{c:?}");
    // Corrected to a reading 2 bar off (a slip of the gauge): flagged on the sheet.
    typed(&mut model, &mut ctx, 'x', &format!("p 2 {:.3}bar", target / 1e5 + 2.0));
    text(&mut model, &mut ctx, "read from the wrong gauge");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    let prog = model.doc.as_ref().unwrap().bench.progress.clone().unwrap();
    let c = &prog.standing.cross_checks[0];
    assert!(c.disagrees(), "{c:?}");
    // Allowed: twice the gauge (0.05 bar), thermometer (0.5 K) and volume (0.58 %) combined.
    assert!(c.allowed_pa > 0.1e5 && c.allowed_pa < 0.2e5, "{c:?}");
    let screen = fillwright::tui::scenes::text(&render(&model, &ctx));
    assert!(screen.contains("but the weighing gives"), "{screen}");
}

#[test]
fn the_air_is_asked_where_the_settings_say_and_needs_the_outer_volume_once() {
    let (mut model, mut ctx, _dir) = on_sheet("air", "flue-gas-span");
    ctx.settings.air_conditions = fillwright::settings::AirConditions::EachWeighing;
    typed(&mut model, &mut ctx, 'w', "13412.000g");
    assert!(
        matches!(&model.overlay, Overlay::Prompt { purpose: fillwright::tui::model::Prompt::Air(0), .. }),
        "{:?}",
        model.overlay
    );
    text(&mut model, &mut ctx, "20.4C 1012.3hPa 41%");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    assert!(model.status.contains("outer (displaced) volume"), "{}", model.status);
    keys(&mut model, &mut ctx, &[Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "20.4C 1012.3hPa 41% 13.6L");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    let r = record_of(&model);
    assert_eq!(r.air.len(), 1);
    assert_eq!(r.cylinder_outer_volume.as_deref(), Some("13.6L"));
    // The next weighing asks again; the record stays readable meanwhile (one entry each).
    typed(&mut model, &mut ctx, 'w', "13412.93g");
    assert_eq!(record_of(&model).air.len(), 2);
    assert!(model.doc.as_ref().unwrap().bench.progress.is_some(), "the record still reads");
    text(&mut model, &mut ctx, "21.0C 1011.8hPa 40%");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    let r = record_of(&model);
    assert_eq!(r.air[1].temperature, "21.0C");
    assert_eq!(r.air[0].temperature, "20.4C");
    // Out of the equation's range: refused, the prompt kept.
    typed(&mut model, &mut ctx, 'a', "80C 1012hPa 40%");
    assert!(model.status.contains("outside the range"), "{}", model.status);
}

#[test]
fn a_substitution_weighing_takes_the_reference_cylinders_reading_beside_each() {
    let (mut model, mut ctx, _dir) = on_sheet("substitution", "flue-gas-span");
    typed(&mut model, &mut ctx, 'w', "13412.00g / 13950.12g");
    assert_eq!(record_of(&model).reference_weighings, ["13950.12g"]);
    // Every weighing then has its reference reading; a reading alone is refused.
    typed(&mut model, &mut ctx, 'w', "13412.93g");
    assert!(model.status.contains("weighed by substitution"), "{}", model.status);
    keys(&mut model, &mut ctx, &[Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "13412.94g / 13950.13g");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    let r = record_of(&model);
    assert_eq!((r.weighings.len(), r.reference_weighings.len()), (2, 2));
    // The far-from-plan judgement is on the difference: 0.93 g added (0.94 − 0.01 drift).
    assert!(model.status.contains("step 1 weighed"), "{}", model.status);
    let progress = model.doc.as_ref().unwrap().bench.progress.as_ref().unwrap();
    assert!(progress.rows[0].1 > 0.0, "the record reads: {:?}", progress.rows);
}

#[test]
fn a_warm_reading_far_over_the_plan_is_not_called_normal() {
    let (mut model, mut ctx, _dir) = on_sheet("overfill", "flue-gas-span");
    let last = model.doc.as_ref().unwrap().bench.done.len() - 1;
    typed(&mut model, &mut ctx, 't', "35C");
    for _ in 0..last {
        keys(&mut model, &mut ctx, &[Key::Down]);
    }
    // 206 barg at 35 °C: above the 200 bar working pressure only because it is warm (it
    // settles below it at 15 °C), but some 40 bar over the plan's 160 bar.
    typed(&mut model, &mut ctx, 'r', "206barg");
    let doc = model.doc.as_ref().unwrap();
    let notes = fillwright::tui::views::sheet::reading_notes(doc, &model.limits, &model.shown, last);
    assert!(notes.iter().all(|(_, n)| !n.contains("Normal")), "{notes:?}");
    assert!(notes.iter().any(|(s, n)| *s == fillwright::checks::Severity::Caution && n.contains("far from the plan")));
}

#[test]
fn a_tolerance_as_wide_as_the_amount_is_questioned() {
    let (mut model, mut ctx, _dir) = setup("tolerance");
    open(&mut model, &mut ctx, "flue-gas-span");
    go_to_component(&mut model, &mut ctx, "CO");
    keys(&mut model, &mut ctx, &[Key::Down]);
    let field = model.doc.as_ref().unwrap().current_field();
    assert!(matches!(field, fillwright::tui::model::Field::Tolerance(_)), "{field:?}");
    keys(&mut model, &mut ctx, &[Key::Enter, Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "2%");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    assert!(
        model.status.contains("CO: the tolerance ±2% (absolute) is as wide as the amount 500ppm"),
        "{}",
        model.status
    );
    assert!(model.status.contains("%rel"), "{}", model.status);
    // A relative one passes without a word.
    keys(&mut model, &mut ctx, &[Key::Enter, Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "2%rel");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    assert_eq!(model.status, "recomputed");
}

fn render_at(model: &Model, ctx: &Context, w: u16, h: u16) -> String {
    let mut terminal = ratatui::Terminal::new(ratatui::backend::TestBackend::new(w, h)).unwrap();
    terminal.draw(|f| fillwright::tui::view::view(model, &ctx.catalogue, f)).unwrap();
    fillwright::tui::scenes::text(terminal.backend().buffer())
}

#[test]
fn every_view_s_help_fits_whole_at_80_by_24() {
    let (mut model, mut ctx, _dir) = setup("help-fits");
    open(&mut model, &mut ctx, "flue-gas-span");
    for view in ['1', '2', '3', '4', '5'] {
        keys(&mut model, &mut ctx, &[Key::Char(view), Key::Char('?')]);
        let screen = render_at(&model, &ctx, 80, 24);
        // The shared keys close the help: its last line is on the screen, inside the box.
        assert!(screen.contains("Esc         back out"), "view {view}:\n{screen}");
        let last = screen.lines().position(|l| l.contains("Esc         back out")).unwrap();
        assert!(screen.lines().nth(last + 1).is_some_and(|l| l.contains('└')), "view {view}: the box is cut\n{screen}");
        // Every help line is whole on one screen line: none wrapped.
        let v = fillwright::tui::model::View::ALL[(view as u8 - b'1') as usize];
        for line in fillwright::tui::views::of(v).help() {
            assert!(screen.lines().any(|l| l.contains(line.trim_end())), "view {view}: {line:?} is cut\n{screen}");
        }
        keys(&mut model, &mut ctx, &[Key::Esc]);
    }
}

#[test]
fn the_screening_view_opens_on_the_worst_check_and_the_oxygen_caution_needs_an_oxidiser() {
    let (mut model, mut ctx, _dir) = setup("screen-worst");
    // Methane in synthetic air: flammability and oxidising at caution or worse, condensation ok.
    open(&mut model, &mut ctx, "detector-test-ch4-air");
    keys(&mut model, &mut ctx, &[Key::Char('5')]);
    let checks = model.doc.as_ref().unwrap().computed.checks.clone().unwrap();
    let worst = checks.iter().map(|c| c.severity).max().unwrap();
    assert_ne!(checks[0].severity, worst, "the first check is not the worst here, so the test means something");
    let screen = render_at(&model, &ctx, 120, 40);
    let chosen = screen.lines().find(|l| l.contains('▶')).unwrap();
    assert!(chosen.contains(worst.key()), "the view opens on a {} check:\n{screen}", worst.key());
    assert!(screen.contains("oxygen-clean"), "O2 in the blend: the caution is shown\n{screen}");
    // A blend without any oxidiser does not get the oxygen-clean caution.
    keys(&mut model, &mut ctx, &[Key::Char('1')]);
    open(&mut model, &mut ctx, "fuel-cell-h2-he");
    keys(&mut model, &mut ctx, &[Key::Char('5')]);
    let screen = render_at(&model, &ctx, 120, 40);
    assert!(screen.contains("Follow local codes"), "{screen}");
    assert!(!screen.contains("oxygen-clean"), "no oxidiser, no oxygen-clean caution:\n{screen}");
    // The oxidising sum reads the same in the heading and the detail.
    let ox = checks.iter().find(|c| c.id == "oxidising").unwrap();
    let sum = ox.data["oxygen_equivalent"].as_f64().unwrap();
    assert!(ox.message.contains(&format!("{sum:.4}")), "{}", ox.message);
    assert!(ox.details.iter().any(|d| d.contains(&format!("{sum:.4}"))), "{:?}", ox.details);
}

#[test]
fn a_new_gas_is_typed_fresh_esc_stays_on_the_fill_sheet_and_search_reads_descriptions() {
    let (mut model, mut ctx, _dir) = setup("fields-words");
    open(&mut model, &mut ctx, "flue-gas-span");
    typed(&mut model, &mut ctx, 'a', "argon");
    // Typing replaces the provisional amount; nothing to clear first.
    text(&mut model, &mut ctx, "400ppm");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    let doc = model.doc.as_ref().unwrap();
    assert_eq!(doc.recipe.components.iter().find(|c| c.gas == "Ar").unwrap().amount, "400ppm");
    // Esc on the Fill sheet does not leave it (a key typed next acts on the sheet).
    keys(&mut model, &mut ctx, &[Key::Char('3'), Key::Esc]);
    assert_eq!(model.view, View::Sheet);
    assert!(model.status.contains("Esc stays"), "{}", model.status);
    keys(&mut model, &mut ctx, &[Key::Char('2'), Key::Esc]);
    assert_eq!(model.view, View::Library, "elsewhere Esc still goes back to the Library");
    // The library search reads descriptions and notes too.
    let description = ctx.library.open("pipeline-ng-9").unwrap().recipe.description;
    let word = description.split_whitespace().find(|w| w.len() > 5 && w.chars().all(char::is_alphabetic)).unwrap();
    assert!(!"pipeline-ng-9".contains(&word.to_lowercase()));
    keys(&mut model, &mut ctx, &[Key::Char('/')]);
    text(&mut model, &mut ctx, &word.to_lowercase());
    let names: Vec<&str> = model.library.visible().iter().map(|&i| model.library.entries[i].name.as_str()).collect();
    assert!(names.contains(&"pipeline-ng-9"), "{word}: {names:?}");
}

#[test]
fn the_fill_sheet_shows_the_composition_made_not_the_amounts() {
    let (mut model, mut ctx, _dir) = setup("made-so-far");
    open(&mut model, &mut ctx, "flue-gas-span");
    weigh(&mut model, &mut ctx, "13412.000g");
    weigh(&mut model, &mut ctx, "13412.928g");
    // CH4 3 % over its 26.585 g: its amount is 3 % over the plan, its share far less.
    weigh(&mut model, &mut ctx, &format!("{}g", 13412.928 + 26.585 * 1.03));
    let doc = model.doc.as_ref().unwrap();
    let prog = doc.bench.progress.as_ref().unwrap();
    let plan = doc.computed.plan.as_ref().unwrap();
    let lines: Vec<String> =
        fillwright::tui::views::sheet::draw::composition_made(prog, plan, 78).into_iter().map(|(l, _)| l).collect();
    let said = lines.join(" ");
    assert!(said.starts_with("made so far, against the plan after step 2:"), "{said}");
    // The deviation of CH4's share, computed here from the amounts in the cylinder.
    let (now, planned): (f64, f64) = (prog.rows.iter().map(|r| r.1).sum(), prog.rows.iter().map(|r| r.2).sum());
    let ch4 = prog.rows.iter().find(|r| r.0 == "CH4").unwrap();
    let amount_dev = (ch4.1 / ch4.2 - 1.0) * 100.0;
    let share_dev = ((ch4.1 / now) / (ch4.2 / planned) - 1.0) * 100.0;
    assert!((amount_dev - 3.0).abs() < 0.05, "{amount_dev}");
    assert!(share_dev.abs() < 0.5 * amount_dev, "{share_dev}");
    assert!(said.contains(&format!("({}%)", fillwright::units::signed(share_dev, 2))), "{said}");
    let screen = fillwright::tui::scenes::text(&render(&model, &ctx));
    assert!(screen.contains("made so far"), "{screen}");
    // An unfinished fill is not certified.
    keys(&mut model, &mut ctx, &[Key::Char('C')]);
    assert!(model.status.starts_with("not certified: the fill is not finished"), "{}", model.status);
    // Filled on at the live readings: once every step is weighed, the shares are judged
    // against the target and its tolerance, and CH4's overfill is out of its 1 %rel.
    for k in 2..4 {
        let reading = live_scale(&model, k);
        weigh(&mut model, &mut ctx, &format!("{reading:.3}g"));
    }
    let doc = model.doc.as_ref().unwrap();
    let made = fillwright::tui::views::sheet::draw::composition_made(
        doc.bench.progress.as_ref().unwrap(),
        doc.computed.plan.as_ref().unwrap(),
        78,
    );
    let said: String = made.iter().map(|(l, _)| l.as_str()).collect::<Vec<_>>().join(" ");
    assert!(said.starts_with("made, against the target:"), "{said}");
    assert!(said.contains("OUT of ±") && made.iter().any(|(_, out)| *out), "{said}");
    assert!(said.contains("within ±"), "CO2 is within its tolerance: {said}");
    // Certified from the sheet: the certificate as `certify ID` makes it, text and PDF.
    let rec_id = doc.bench.record.as_ref().unwrap().id.clone();
    keys(&mut model, &mut ctx, &[Key::Char('C')]);
    assert!(model.status.contains("written to") && model.status.contains("certificates"), "{}", model.status);
    let id = rec_id.clone();
    let written = std::fs::read_to_string(_dir.join(format!("library/certificates/{id}.txt"))).unwrap();
    assert!(
        written.starts_with("CERTIFICATE OF PREPARATION") && written.contains(&format!("record {id}")),
        "{written}"
    );
    assert!(std::fs::read(_dir.join(format!("library/certificates/{id}.pdf"))).unwrap().starts_with(b"%PDF-"));
    // Reopened, the finished fill is named with how to certify it, not "no fill record".
    let id = rec_id;
    keys(&mut model, &mut ctx, &[Key::Char('1')]);
    open(&mut model, &mut ctx, "flue-gas-span");
    assert!(model.doc.as_ref().unwrap().bench.record.is_none());
    keys(&mut model, &mut ctx, &[Key::Char('3')]);
    let screen = fillwright::tui::scenes::text(&render(&model, &ctx)).replace('\n', " ");
    assert!(screen.contains(&format!("the last fill, record {id}, is finished")), "{screen}");
    assert!(!screen.contains("no fill record yet"), "{screen}");
}

#[test]
fn saving_a_new_revision_during_a_fill_warns_that_the_fill_keeps_its_revision() {
    let (mut model, mut ctx, _dir) = setup("save-during-fill");
    open(&mut model, &mut ctx, "flue-gas-span");
    weigh(&mut model, &mut ctx, "13412.000g");
    keys(&mut model, &mut ctx, &[Key::Char('2')]);
    go_to_component(&mut model, &mut ctx, "CO2");
    keys(&mut model, &mut ctx, &[Key::Enter, Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "14%");
    keys(&mut model, &mut ctx, &[Key::Enter, Key::Char('s')]);
    assert!(model.status.starts_with("saved rev 2"), "{}", model.status);
    assert!(
        model.status.contains("WARNING: the fill in progress") && model.status.contains("rev 1"),
        "{}",
        model.status
    );
    // Longer than the status line at 80 columns: shown whole, wrapped above the keys.
    let screen = render_at(&model, &ctx, 80, 24);
    let foot: Vec<&str> = screen.lines().rev().take(3).collect();
    let said = foot.iter().rev().map(|l| l.trim_end()).collect::<Vec<_>>().join(" ");
    assert!(said.contains("not this one"), "{screen}");
    assert!(foot[0].starts_with("? help"), "the keys stay on the last row: {screen}");
    // The Library marks the recipe with a fill in progress, and only it.
    keys(&mut model, &mut ctx, &[Key::Char('1')]);
    let screen = fillwright::tui::scenes::text(&render(&model, &ctx));
    let row = screen.lines().find(|l| l.contains("│  flue-gas-span")).unwrap();
    assert!(row.contains("FILLING"), "{screen}");
    assert_eq!(screen.matches("FILLING").count(), 1, "{screen}");
    // A save with no fill in progress says nothing of the kind.
    let (mut model, mut ctx, _dir) = setup("save-no-fill");
    open(&mut model, &mut ctx, "flue-gas-span");
    go_to_component(&mut model, &mut ctx, "CO2");
    keys(&mut model, &mut ctx, &[Key::Enter, Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "14%");
    keys(&mut model, &mut ctx, &[Key::Enter, Key::Char('s')]);
    assert_eq!(model.status, "saved rev 2");
}

#[test]
fn the_scale_uncertainty_follows_the_resolution_and_can_be_typed_for_one_fill() {
    // GUM 4.3.7: a reading rounded to a resolution d carries u = d/√12.
    assert_eq!(fillwright::tui::views::sheet::scale_uncertainty_text(0.1), "0.029g");
    assert_eq!(fillwright::tui::views::sheet::scale_uncertainty_text(0.01), "0.003g");
    let (mut model, mut ctx, dir) = setup("scale-u");
    open(&mut model, &mut ctx, "flue-gas-span");
    weigh(&mut model, &mut ctx, "13412.000g");
    let record = |dir: &std::path::Path| {
        let records = dir.join("library/records");
        let file = std::fs::read_dir(&records).unwrap().flatten().find(|e| e.path().is_file()).unwrap().path();
        std::fs::read_to_string(file).unwrap()
    };
    let expected = fillwright::tui::views::sheet::scale_uncertainty_text(ctx.settings.scale_resolution_g);
    assert!(record(&dir).contains(&format!("scale_uncertainty: \"{expected}\"")), "{}", record(&dir));
    // The balance's own figure, typed with it.
    typed(&mut model, &mut ctx, 'b', "bench balance B2, u=0.02g");
    assert!(model.status.contains("scale u = 0.02g"), "{}", model.status);
    let saved = record(&dir);
    assert!(
        saved.contains("scale_uncertainty: \"0.02g\"") && saved.contains("balance: \"bench balance B2\""),
        "{saved}"
    );
    // A figure that is not a mass keeps the prompt open with why.
    typed(&mut model, &mut ctx, 'b', "B2 u=2mol");
    assert!(matches!(model.overlay, Overlay::Prompt { .. }));
    assert!(model.status.contains("u=2mol"), "{}", model.status);
}

#[test]
fn certifying_a_fill_with_only_the_empty_weighing_says_why_in_the_status_line() {
    let (mut model, mut ctx, _dir) = setup("certify-early");
    open(&mut model, &mut ctx, "flue-gas-span");
    keys(&mut model, &mut ctx, &[Key::Char('3'), Key::Char('C')]);
    assert!(model.status.starts_with("not certified: no fill record yet"), "{}", model.status);
    weigh(&mut model, &mut ctx, "13412.000g");
    keys(&mut model, &mut ctx, &[Key::Char('C')]);
    assert!(model.status.starts_with("not certified: the record has no additions yet"), "{}", model.status);
    // With the first addition begun (its temperature typed): what is wrong first, not the
    // record file's path, line and column.
    keys(&mut model, &mut ctx, &[Key::Char('t')]);
    text(&mut model, &mut ctx, "28C");
    keys(&mut model, &mut ctx, &[Key::Enter, Key::Char('C')]);
    assert!(model.status.starts_with("not certified: no addition is complete yet"), "{}", model.status);
    assert!(!model.status.contains(".ron:"), "{}", model.status);
}

#[test]
fn the_models_view_shows_the_composition_error_of_following_each_models_readings() {
    let (mut model, mut ctx, _dir) = setup("models-following");
    open(&mut model, &mut ctx, "pipeline-ng-9");
    assert!(model.doc.as_ref().unwrap().computed.following.is_none(), "not made until the view is shown");
    keys(&mut model, &mut ctx, &[Key::Char('4')]);
    let doc = model.doc.as_ref().unwrap();
    let (ids, following) = doc.computed.following.clone().expect("made on showing the Models view");
    // The same comparison as the command line's plan makes (the printed sheet's table).
    let options = fillwright::plan::PlanOptions {
        skip_following: false,
        ..fillwright::tui::model::Computed::options(&ctx.settings)
    };
    let full = fillwright::plan::plan(doc.computed.order.as_ref().unwrap(), &ctx.catalogue, &options).unwrap();
    assert_eq!(following, full.following);
    let f = following.last().unwrap();
    let screen = fillwright::tui::scenes::text(&render(&model, &ctx));
    assert!(screen.contains(&format!("composition error in %, as {} says", f.truth.key())), "{screen}");
    // The gas with the largest error leads, with its error for the ideal gas's readings.
    let plan = doc.computed.plan.as_ref().unwrap();
    let worst = (0..plan.gases.len())
        .filter(|&i| plan.components[i].mole_fraction > 0.0)
        .max_by(|&a, &b| {
            let w = |i: usize| f.rows.iter().map(|r| r.relative_error_percent[i].abs()).fold(0.0, f64::max);
            w(a).total_cmp(&w(b))
        })
        .unwrap();
    let ideal = f.rows.iter().find(|r| r.targets_of == fillwright::thermo::Model::Ideal).unwrap();
    let row =
        screen.lines().find(|l| l.starts_with(&format!(" {:<13}", ids[worst]))).unwrap_or_else(|| panic!("{screen}"));
    assert!(row.contains(&fillwright::units::signed(ideal.relative_error_percent[worst], 2)), "{row}");
    // Leaving the view keeps it for the same plan (made once per plan).
    keys(&mut model, &mut ctx, &[Key::Char('2')]);
    assert!(model.doc.as_ref().unwrap().computed.following.is_some());
}

#[test]
fn the_records_list_opens_continues_corrects_certifies_and_prints_any_fill() {
    let (mut model, mut ctx, dir) = setup("records-view");
    // An empty library of records says so and opens nothing.
    keys(&mut model, &mut ctx, &[Key::Char('f')]);
    assert!(matches!(model.overlay, Overlay::None));
    assert!(model.status.contains("no fill records"), "{}", model.status);
    open(&mut model, &mut ctx, "flue-gas-span");
    weigh(&mut model, &mut ctx, "13412.000g");
    weigh(&mut model, &mut ctx, "13412.928g");
    let id = model.doc.as_ref().unwrap().bench.record.as_ref().unwrap().id.clone();
    // From the Library with another recipe open: the list shows the fill in progress.
    keys(&mut model, &mut ctx, &[Key::Char('1')]);
    open(&mut model, &mut ctx, "pipeline-ng-9");
    keys(&mut model, &mut ctx, &[Key::Char('1'), Key::Char('f')]);
    let Overlay::Records(list) = &model.overlay else { panic!("no records list: {}", model.status) };
    assert_eq!(list.rows.len(), 1);
    let screen = fillwright::tui::scenes::text(&render(&model, &ctx));
    assert!(screen.contains(&id) && screen.contains("in progress, 2 weighings"), "{screen}");
    // Its report: every reading as recorded, and the revisions.
    keys(&mut model, &mut ctx, &[Key::Char('p')]);
    let report = std::fs::read_to_string(dir.join(format!("library/reports/{id}.txt"))).unwrap();
    assert!(report.starts_with(&format!("FILL RECORD {id}")), "{report}");
    assert!(report.contains("13412.000g") && report.contains("13412.928g"), "{report}");
    assert!(report.contains("REVISIONS") && report.contains("(not finished)"), "{report}");
    assert!(report.lines().all(|l| l.chars().count() <= 80), "{report}");
    // Certifying an unfinished fill is refused with the reason; the list stays open.
    keys(&mut model, &mut ctx, &[Key::Char('C')]);
    assert!(model.status.contains("not certified") && model.status.contains("not finished"), "{}", model.status);
    assert!(matches!(model.overlay, Overlay::Records(_)));
    // Enter opens it on the Fill sheet, where the fill continues at step 2.
    keys(&mut model, &mut ctx, &[Key::Enter]);
    assert_eq!(model.view, View::Sheet, "{}", model.status);
    let doc = model.doc.as_ref().unwrap();
    assert_eq!(doc.name, "flue-gas-span");
    assert_eq!(doc.bench.record.as_ref().unwrap().id, id);
    assert_eq!(doc.bench.selected, 1);
    assert!(model.status.contains("continues"), "{}", model.status);
    for k in 1..4 {
        let reading = live_scale(&model, k);
        weigh(&mut model, &mut ctx, &format!("{reading:.3}g"));
    }
    assert!(model.doc.as_ref().unwrap().bench.record.as_ref().unwrap().record.finished.is_some());
    // A finished fill, from another recipe's sheet: opened for review, x corrects it.
    keys(&mut model, &mut ctx, &[Key::Char('1')]);
    open(&mut model, &mut ctx, "pipeline-ng-9");
    keys(&mut model, &mut ctx, &[Key::Char('1'), Key::Char('f'), Key::Char('x')]);
    assert_eq!(model.view, View::Sheet);
    assert_eq!(model.doc.as_ref().unwrap().bench.record.as_ref().unwrap().id, id);
    assert!(
        matches!(&model.overlay, Overlay::Prompt { purpose: fillwright::tui::model::Prompt::Correction, .. }),
        "{:?}",
        model.overlay
    );
    keys(&mut model, &mut ctx, &[Key::Esc]);
    // The sheet's own list is this recipe's; C certifies from it.
    keys(&mut model, &mut ctx, &[Key::Char('f')]);
    let Overlay::Records(list) = &model.overlay else { panic!("{}", model.status) };
    assert_eq!(list.of.as_deref(), Some("flue-gas-span"));
    keys(&mut model, &mut ctx, &[Key::Char('C')]);
    assert!(model.status.contains("written to"), "{}", model.status);
    assert!(dir.join(format!("library/certificates/{id}.txt")).exists());
    // The list and the sheet say it is certified.
    assert!(fillwright::tui::scenes::text(&render(&model, &ctx)).contains("certified, finished"));
    keys(&mut model, &mut ctx, &[Key::Esc, Key::Char('1')]);
    open(&mut model, &mut ctx, "flue-gas-span");
    keys(&mut model, &mut ctx, &[Key::Char('3')]);
    assert!(render_at(&model, &ctx, 80, 24).contains("and certified"), "{}", render_at(&model, &ctx, 80, 24));
    // The recipe deleted: its record still lists and certifies, and opening says why not.
    keys(&mut model, &mut ctx, &[Key::Char('1')]);
    ctx.library.delete("flue-gas-span", &stamp()).unwrap();
    model.doc = None;
    keys(&mut model, &mut ctx, &[Key::Char('f'), Key::Enter]);
    assert!(model.status.contains("no longer holds"), "{}", model.status);
    assert!(matches!(model.overlay, Overlay::Records(_)));
}

#[test]
fn a_premix_of_two_gases_goes_from_proposal_to_a_certified_source_on_the_screen() {
    let (mut model, mut ctx, dir) = setup("premix-workflow");
    let recipe_text = r#"Recipe(format: 1, name: "stack-span", order: "KX-5102", components: [
        (gas: "CO", amount: "400ppm", tolerance: "2%rel"), (gas: "SO2", amount: "100ppm", tolerance: "2%rel"),
        (gas: "CO2", amount: "15%"), (gas: "N2", amount: "balance")], cylinder: (water_capacity: "10L",
        working_pressure: "200bar", test_pressure: "300bar", serial: "KX-10-77"), fill: Pressure("150bar"))"#;
    std::fs::write(dir.join("library/stack-span.ron"), recipe_text).unwrap();
    update::refresh(&mut model, &ctx);
    open(&mut model, &mut ctx, "stack-span");
    keys(&mut model, &mut ctx, &[Key::Char('3'), Key::Char('m')]);
    // The premix of both gases is proposed first, with why; at 80×24 its text scrolls.
    let screen = render_at(&model, &ctx, 80, 24);
    assert!(
        screen.contains("PREMIX PROPOSED for steps 1 and 2") && screen.contains("one cylinder instead of 2"),
        "{screen}"
    );
    assert!(screen.contains("go into the blend (steps 1 and 2)"), "{screen}");
    keys(&mut model, &mut ctx, &[Key::Right]);
    assert!(matches!(model.overlay, Overlay::Premixes { selected: 1, scroll: 0 }));
    keys(&mut model, &mut ctx, &[Key::Left, Key::Char('a')]);
    let premix = "premix-CO-0.5%-SO2-0.125%-in-N2";
    assert!(model.status.contains(&format!("g on its step opens {premix}")), "{}", model.status);
    // g before the blend is saved: save first.
    let step = {
        let doc = model.doc.as_ref().unwrap();
        doc.computed.plan.as_ref().unwrap().steps.iter().position(|s| s.source.starts_with("CO 0.5 % + SO2")).unwrap()
    };
    model.doc.as_mut().unwrap().bench.selected = step;
    keys(&mut model, &mut ctx, &[Key::Char('g')]);
    assert!(model.status.starts_with("save the blend first"), "{}", model.status);
    keys(&mut model, &mut ctx, &[Key::Char('s')]);
    let doc = model.doc.as_ref().unwrap();
    assert!(
        doc.bench.premix_states[step].as_deref().unwrap().contains("not filled yet"),
        "{:?}",
        doc.bench.premix_states
    );
    assert!(render_at(&model, &ctx, 80, 24).contains("not filled yet"));
    // g opens the premix on its own Fill sheet; it is filled and certified there.
    keys(&mut model, &mut ctx, &[Key::Char('g')]);
    assert_eq!(model.doc.as_ref().unwrap().name, premix, "{}", model.status);
    assert_eq!(model.view, View::Sheet);
    // The premix recipe names no cylinder: its serial is asked before the record starts.
    keys(&mut model, &mut ctx, &[Key::Char('w')]);
    assert!(model.status.contains("names no cylinder serial"), "{}", model.status);
    keys(&mut model, &mut ctx, &[Key::Enter]);
    assert!(model.status.contains("type the serial"), "an empty serial is refused: {}", model.status);
    text(&mut model, &mut ctx, "PX-0311");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    text(&mut model, &mut ctx, "12950.000g");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    let id = model.doc.as_ref().unwrap().bench.record.as_ref().map(|r| r.id.clone());
    assert!(id.as_deref().is_some_and(|id| id.starts_with("PX-0311-")), "{id:?}: {}", model.status);
    let steps = model.doc.as_ref().unwrap().bench.done.len();
    for k in 0..steps {
        let reading = live_scale(&model, k);
        weigh(&mut model, &mut ctx, &format!("{reading:.3}g"));
    }
    let premix_record = model.doc.as_ref().unwrap().bench.record.as_ref().unwrap().id.clone();
    keys(&mut model, &mut ctx, &[Key::Char('C')]);
    assert!(model.status.contains("premix of stack-span"), "{}", model.status);
    assert!(model.status.chars().count() <= 3 * 80, "fits the three status rows: {}", model.status);
    // Back on the blend: the premix is made, and its record is offered as the step's source.
    keys(&mut model, &mut ctx, &[Key::Char('1')]);
    open(&mut model, &mut ctx, "stack-span");
    let doc = model.doc.as_ref().unwrap();
    let state = doc.bench.premix_states[step].clone().unwrap();
    assert!(state.contains(&format!("made, record {premix_record}")), "{state}");
    assert_eq!(step, 0, "the premix is dosed first");
    weigh(&mut model, &mut ctx, "13412.000g");
    let Overlay::Prompt { input, .. } = &model.overlay else { panic!("no source asked: {}", model.status) };
    assert_eq!(input.value(), format!("record:{premix_record}"));
    keys(&mut model, &mut ctx, &[Key::Enter]);
    let rec = &model.doc.as_ref().unwrap().bench.record.as_ref().unwrap().record;
    assert_eq!(rec.additions[0].source, format!("record:{premix_record}"), "{}", model.status);
}

#[test]
fn every_curve_of_the_z_chart_carries_its_own_letter_where_the_curves_meet_too() {
    let (mut model, mut ctx, _dir) = setup("z-letters");
    open(&mut model, &mut ctx, "flue-gas-span");
    keys(&mut model, &mut ctx, &[Key::Char('4')]);
    let curves = &model.doc.as_ref().unwrap().computed.z_curves;
    let letters: Vec<char> = curves.iter().map(|(m, _)| fillwright::tui::views::models::curve_letter(*m)).collect();
    let mut unique = letters.clone();
    unique.dedup();
    assert_eq!(unique.len(), letters.len(), "{letters:?}");
    for screen in [fillwright::tui::scenes::text(&render(&model, &ctx)), render_at(&model, &ctx, 80, 24)] {
        let rows: Vec<&str> = screen.lines().collect();
        let top = rows.iter().position(|l| l.contains("Z against pressure")).unwrap();
        let bottom = top + rows[top..].iter().position(|l| l.starts_with('└')).unwrap();
        // The plot's rows, left box only, without the axis title row.
        let plot: Vec<String> = rows[top + 1..bottom]
            .iter()
            .filter(|l| !l.contains("bar"))
            .map(|l| l.split("││").next().unwrap().to_string())
            .collect();
        for (c, (m, _)) in letters.iter().zip(curves) {
            let n: usize = plot.iter().map(|l| l.chars().filter(|x| x == c).count()).sum();
            assert_eq!(n, 1, "{c} for {} once on the chart:\n{}", m.key(), plot.join("\n"));
            assert!(rows[bottom].contains(&format!("{c}={}", m.key())), "legend: {}", rows[bottom]);
        }
    }
    // Each letter sits on its curve at its own pressure: no two share a column.
    let pmax = curves.iter().flat_map(|(_, p)| p.iter().map(|q| q.0)).fold(1.0, f64::max);
    let xs: Vec<f64> = curves
        .iter()
        .enumerate()
        .map(|(i, (_, p))| fillwright::tui::views::models::label_point(p, i, curves.len(), pmax).0)
        .collect();
    for w in xs.windows(2) {
        assert!(w[1] - w[0] > 0.05 * pmax, "{xs:?}");
    }
}

#[test]
fn a_long_line_being_typed_shows_its_end_where_the_cursor_is() {
    let (mut model, mut ctx, _dir) = setup("long-field");
    open(&mut model, &mut ctx, "flue-gas-span");
    keys(&mut model, &mut ctx, &[Key::Home, Key::Enter, Key::Ctrl('u')]);
    let long = "Span gas for the stack analyser of boiler 2 at the Brackwater site, second quarter ZZEND";
    text(&mut model, &mut ctx, long);
    let screen = render_at(&model, &ctx, 80, 24);
    assert!(screen.contains("ZZEND"), "{screen}");
    // Not typing, the field shows its start again.
    keys(&mut model, &mut ctx, &[Key::Enter]);
    let screen = render_at(&model, &ctx, 80, 24);
    assert!(screen.contains("title             Span gas for the") && !screen.contains("ZZEND"), "{screen}");
}

#[test]
fn a_step_weighed_from_a_source_without_uncertainty_stays_marked_until_corrected() {
    let (mut model, mut ctx, _dir) = on_sheet("unanalysed", "nox-span-premix");
    typed(&mut model, &mut ctx, 'w', "13390.00g");
    // The analysis asked for is put off (Esc), and the step weighed all the same.
    keys(&mut model, &mut ctx, &[Key::Esc]);
    assert!(model.status.starts_with("no source typed") && model.status.contains("l types it"), "{}", model.status);
    typed(&mut model, &mut ctx, 'w', "13403.82g");
    assert_eq!(model.doc.as_ref().unwrap().bench.unanalysed, [0]);
    let screen = render_at(&model, &ctx, 80, 24);
    assert!(screen.contains("step 1's source") && screen.contains("has no uncertainty"), "{screen}");
    // Corrected with its analysis and a reason: the mark goes.
    typed(&mut model, &mut ctx, 'x', "s 1 NO=1.0012%±0.0020%,N2=balance");
    text(&mut model, &mut ctx, "analysis certificate arrived");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    assert!(model.doc.as_ref().unwrap().bench.unanalysed.is_empty(), "{}", model.status);
    assert!(!render_at(&model, &ctx, 80, 24).contains("has no uncertainty"));
}

#[test]
fn a_tolerance_shows_how_it_is_read_and_takes_a_leading_plus_minus() {
    let (mut model, mut ctx, _dir) = setup("tolerance-reading");
    open(&mut model, &mut ctx, "flue-gas-span");
    // CO2 15 % with 1%rel reads ±0.15 %; typed as `1 %` it is ±1 % mol/mol, 6.7 %rel.
    let tol_row = |model: &Model, gas: &str| {
        let r = &model.doc.as_ref().unwrap().recipe;
        let i = r.components.iter().position(|c| c.gas == gas).unwrap();
        fillwright::tui::views::editor::tolerance_reading(r, i)
    };
    assert_eq!(tol_row(&model, "CO2").as_deref(), Some("= ±0.15%"));
    go_to_component(&mut model, &mut ctx, "CO2");
    keys(&mut model, &mut ctx, &[Key::Down, Key::Enter, Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "1 %");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    assert_eq!(tol_row(&model, "CO2").as_deref(), Some("absolute = ±6.7%rel"));
    assert!(render_at(&model, &ctx, 80, 24).contains("1 %  (absolute"));
    assert!(fillwright::tui::scenes::text(&render(&model, &ctx)).contains("1 %  (absolute = ±6.7%rel)"));
    // ± in front is taken, not refused.
    keys(&mut model, &mut ctx, &[Key::Enter, Key::Ctrl('u')]);
    text(&mut model, &mut ctx, "±2 %rel");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    assert!(
        model.doc.as_ref().unwrap().computed.plan.is_ok(),
        "{:?}",
        model.doc.as_ref().unwrap().computed.order.as_ref().err()
    );
    assert_eq!(tol_row(&model, "CO2").as_deref(), Some("= ±0.3%"));
}

#[test]
fn a_reading_typed_as_the_sheet_shows_it_does_not_re_plan_the_rest() {
    let (mut model, mut ctx, _dir) = setup("within-noise");
    open(&mut model, &mut ctx, "flue-gas-span");
    weigh(&mut model, &mut ctx, "13412.000g");
    // The sheet shows two decimals; the reading typed as shown is within what two readings
    // of the default 0.1 g scale resolve (2·√2·0.029 g).
    let shown = format!("{:.2}g", live_scale(&model, 0));
    weigh(&mut model, &mut ctx, &shown);
    let live = &model.doc.as_ref().unwrap().bench.live;
    assert!(live.iter().all(|l| l.finished || !l.moved()), "nothing re-planned");
    assert!(!render_at(&model, &ctx, 80, 24).contains("re-planned"));
    // A gram over on CH4 is a real deviation: the rest follows it.
    let over = format!("{:.3}g", live_scale(&model, 1) + 1.0);
    weigh(&mut model, &mut ctx, &over);
    let live = &model.doc.as_ref().unwrap().bench.live;
    assert!(live.iter().any(|l| !l.finished && l.moved()), "re-planned after a real deviation");
}

#[test]
fn a_gas_that_moves_the_plan_to_another_model_says_so() {
    let (mut model, mut ctx, _dir) = setup("model-moves");
    open(&mut model, &mut ctx, "flue-gas-span");
    assert_eq!(model.doc.as_ref().unwrap().computed.plan.as_ref().unwrap().model.key(), "gerg");
    // SO2 is not a GERG-2008 gas: the default becomes the multi-fluid model, and the status says so.
    typed(&mut model, &mut ctx, 'a', "SO2");
    text(&mut model, &mut ctx, "100ppm");
    keys(&mut model, &mut ctx, &[Key::Enter]);
    let now = model.doc.as_ref().unwrap().computed.plan.as_ref().unwrap().model;
    assert_ne!(now.key(), "gerg");
    assert!(
        model.status.starts_with(&format!("recomputed under {} now, not GERG-2008", now.title())),
        "{}",
        model.status
    );
}

#[test]
fn a_reading_typed_mid_step_is_not_judged_as_the_steps_end_once_it_is_weighed() {
    let (mut model, mut ctx, _dir) = setup("mid-step");
    open(&mut model, &mut ctx, "flue-gas-span");
    weigh(&mut model, &mut ctx, "13412.000g");
    // Half-way through step 1 a reading is typed: far from the stop reading, said so.
    typed(&mut model, &mut ctx, 'r', "0.03barg");
    let notes = |model: &Model| {
        fillwright::tui::views::sheet::reading_notes(model.doc.as_ref().unwrap(), &model.limits, &model.shown, 0)
    };
    assert!(!notes(&model).is_empty());
    // Once the step is weighed, the weighing judges it.
    let reading = live_scale(&model, 0);
    weigh(&mut model, &mut ctx, &format!("{reading:.3}g"));
    assert!(notes(&model).is_empty(), "{:?}", notes(&model));
}

/// Where the screen computes the reference equations' answer beside it, an edit shows
/// Peng-Robinson's quick estimate of the phases at once, marked, and the reference's answer
/// replaces it when it comes back; an answer for inputs since changed is not taken.
#[test]
fn the_reference_phases_replace_the_quick_estimate_without_blocking() {
    use fillwright::tui::context::Beside;
    use fillwright::tui::document;
    let (mut model, mut ctx, dir) = setup("beside");
    ctx.beside = Some(Beside::new());
    open(&mut model, &mut ctx, "lpg-in-methane");
    let estimate = model.doc.as_ref().unwrap().computed.clone();
    assert!(estimate.phases_estimated);
    let condensation = |c: &fillwright::tui::model::Computed| {
        c.checks.as_ref().unwrap().iter().find(|k| k.id == "condensation").unwrap().clone()
    };
    let quick = condensation(&estimate);
    assert!(quick.message.contains("Peng-Robinson estimate"), "{}", quick.message);
    assert_eq!(quick.data["model"], "pr");
    keys(&mut model, &mut ctx, &[Key::Char('3')]);
    assert_eq!(model.view, View::Sheet);
    assert!(render_at(&model, &ctx, 120, 40).contains("quick estimate"), "{}", render_at(&model, &ctx, 120, 40));
    // The answer comes back on its own thread (bounded wait).
    let mut taken = false;
    for _ in 0..600 {
        if document::take_beside(&mut model, &ctx) {
            taken = true;
            break;
        }
        std::thread::sleep(std::time::Duration::from_millis(10));
    }
    assert!(taken, "no answer from the reference equations within 6 s");
    let full = &model.doc.as_ref().unwrap().computed;
    assert!(!full.phases_estimated);
    assert!(!render_at(&model, &ctx, 120, 40).contains("quick estimate"));
    let reference = condensation(full);
    assert_eq!(reference.data["model"], "gerg");
    assert!(!reference.message.contains("estimate"), "{}", reference.message);
    // The same as computing it at once.
    let direct =
        fillwright::tui::model::Computed::of(&model.doc.as_ref().unwrap().recipe, &ctx.catalogue, &ctx.settings);
    assert_eq!(condensation(&direct).data["cricondentherm_k"], reference.data["cricondentherm_k"]);
    // An answer for inputs that have changed since is left out.
    let stale = direct.clone();
    let doc = model.doc.as_mut().unwrap();
    doc.computed = fillwright::tui::model::Computed::estimate(&doc.recipe, &ctx.catalogue, &ctx.settings);
    doc.computed.key.push('x');
    ctx.beside.as_ref().unwrap().tx.send((stale.key.clone(), stale)).unwrap();
    assert!(!document::take_beside(&mut model, &ctx));
    assert!(model.doc.as_ref().unwrap().computed.phases_estimated);
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn the_library_list_comes_at_once_and_its_screening_fills_in_from_the_other_thread() {
    let (_, mut ctx, dir) = setup("library-beside");
    ctx.beside = Some(fillwright::tui::context::Beside::new());
    let mut model = Model::new("test library".into(), false);
    update::start(&mut model, &mut ctx);
    // Every recipe is on its way (nothing screened yet), shown as pending.
    let n = model.library.entries.len();
    assert!(n >= 7, "{n}");
    assert_eq!(model.library.pending.len(), n);
    let screen = fillwright::tui::scenes::text(&render(&model, &ctx));
    assert!(screen.contains('…'), "{screen}");
    let wait_all = |model: &mut Model, ctx: &Context| {
        let start = std::time::Instant::now();
        while !model.library.pending.is_empty() {
            assert!(start.elapsed() < std::time::Duration::from_secs(60), "screening never came back");
            fillwright::tui::document::take_beside(model, ctx);
            std::thread::sleep(std::time::Duration::from_millis(20));
        }
    };
    wait_all(&mut model, &ctx);
    for (e, s) in model.library.entries.iter().zip(&model.library.screening) {
        let recipe = ctx.library.open(&e.name).unwrap().recipe;
        let own = fillwright::tui::model::Computed::of(&recipe, &ctx.catalogue, &ctx.settings);
        assert_eq!(*s, own.checks.as_ref().map(|c| fillwright::checks::worst(c)), "{}", e.name);
    }
    // A refresh screens only the recipe changed on disk; a result for an older file is
    // not taken.
    let i = model.library.entries.iter().position(|e| e.name == "flue-gas-span").unwrap();
    let path = model.library.entries[i].path.clone();
    let text = std::fs::read_to_string(&path).unwrap().replace("Pressure(\"150bar\")", "Pressure(\"250bar\")");
    std::fs::write(&path, &text).unwrap();
    update::refresh(&mut model, &ctx);
    assert_eq!(model.library.pending.keys().collect::<Vec<_>>(), vec!["flue-gas-span"]);
    wait_all(&mut model, &ctx);
    assert_eq!(model.library.screening[i], Some(fillwright::checks::Severity::Stop), "above the working pressure");
    let _ = std::fs::remove_dir_all(dir);
}
