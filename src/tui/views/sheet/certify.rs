//! Certifying a finished fill from the Fill sheet (`C`): the certificate as `fillwright
//! certify ID` makes it, written as text and PDF to `certificates/` in the library, so that
//! a blender goes from the order to the certificate on the screen alone.

use crate::certify::{certify_record, Evaluate, Found};
use crate::library::Library;
use crate::tui::context::Context;
use crate::tui::model::Model;

/// The fill to certify: the one on the sheet, else the recipe's last finished one.
fn record_id(model: &Model) -> Option<String> {
    let doc = model.doc.as_ref()?;
    doc.bench.record.as_ref().map(|r| r.id.clone()).or_else(|| doc.bench.last_finished.clone())
}

/// Certify the fill and write the certificate; the status line says where, or why not.
pub fn certify(model: &mut Model, ctx: &Context) {
    model.status = match certify_to_files(model, ctx) {
        Ok(said) => said,
        Err(why) => format!("not certified: {why}"),
    };
    if let Some(doc) = model.doc.as_mut() {
        super::sync_from_record(doc, ctx);
    }
    // A premix of the library's blends: say where the work goes on.
    let Some(name) = model.doc.as_ref().map(|d| d.name.clone()) else { return };
    if model.status.starts_with("not certified") {
        return;
    }
    let blends = super::premixes::blends_taking(&model.library.entries, &name);
    if !blends.is_empty() {
        model.status = format!(
            "{}; it is the premix of {}: open that, its step takes this record",
            model.status,
            blends.join(", ")
        );
    }
}

fn certify_to_files(model: &Model, ctx: &Context) -> Result<String, String> {
    let id = record_id(model).ok_or("no fill record yet: weigh the empty cylinder first (w)")?;
    certify_id(ctx, &id)
}

/// Certify record `id` of the library and write its certificate (text and PDF) to
/// `certificates/`; what the status line says, or why not.
pub fn certify_id(ctx: &Context, id: &str) -> Result<String, String> {
    let id = id.to_string();
    let opened = ctx.library.open_record(&id).map_err(|e| e.to_string())?;
    let found = Found {
        id: opened.id.clone(),
        origin: opened.path.display().to_string(),
        text: opened.text.clone(),
        record: opened.record.clone(),
        library: Some(Library::existing(ctx.library.dir())),
    };
    let how =
        Evaluate { model: None, draws: crate::record::DEFAULT_DRAWS, seed: crate::record::DEFAULT_SEED, issued: None };
    // The status line has room for what is wrong, not for where in the file: the record is
    // the one on the sheet.
    let at = format!("{}:", found.origin);
    let mut c = certify_record(&found, &ctx.catalogue, how).map_err(|e| match e.strip_prefix(&at) {
        Some(rest) => rest.split_once(": ").map_or(rest.to_string(), |(_, why)| why.to_string()),
        None => e,
    })?;
    if let Some(why) = &c.unfinished {
        return Err(format!("the fill is not finished ({why}); a certificate is for a finished fill"));
    }
    if let Some(lib) = &found.library {
        c.attach_verifications(lib, &ctx.catalogue);
    }
    let cert = c.certificate(&ctx.catalogue);
    let pdf = c.pdf(&cert, &id);
    ctx.library.own_dir(&["certificates"]).map_err(|e| e.to_string())?;
    let path = ctx.library.certificate_path(&id);
    crate::library::atomic::write(&path, cert.text().as_bytes()).map_err(|e| e.to_string())?;
    crate::library::atomic::write(&path.with_extension("pdf"), &pdf).map_err(|e| e.to_string())?;
    let stop = if cert.stopped_by_analysis() { "STOP - the analysis does not confirm the content; " } else { "" };
    Ok(format!(
        "{stop}certificate of {id} written to certificates/{id}.txt and .pdf in the library, a draft for review"
    ))
}
