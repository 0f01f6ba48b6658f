//! The outside checks bundled at build time: every `data-checks/*.csv` file
//! of the workspace (format in `data-checks/README.md`).

mod bundled {
    include!(concat!(env!("OUT_DIR"), "/data_checks.rs"));
}

/// The bundled data-check files, sorted by name: (file name, contents).
pub fn bundled() -> &'static [(&'static str, &'static str)] {
    bundled::BUNDLED
}
