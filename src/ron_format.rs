//! How every RON file of the program is read: optional fields may be written bare
//! (`tolerance: "2%rel"` rather than `tolerance: Some("2%rel")`).

/// The RON options for reading recipes, settings and catalogue files.
pub fn options() -> ron::Options {
    ron::Options::default().with_default_extension(ron::extensions::Extensions::IMPLICIT_SOME)
}
