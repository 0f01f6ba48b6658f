//! Build script of the `kzero` binary.
//!
//! * Embeds the git revision (`git rev-parse --short=12 HEAD`, or `unknown`)
//!   as the environment variable `KZERO_GIT_REV` for the provenance lines.
//! * Bundles every `data-checks/*.csv` file into the binary (`kzero check`
//!   runs them without needing the source tree): writes
//!   `$OUT_DIR/data_checks.rs` with a list of (file name, contents).

use std::env;
use std::fs;
use std::path::{Path, PathBuf};
use std::process::Command;

fn git_revision(root: &Path) -> String {
    let out = Command::new("git")
        .args(["rev-parse", "--short=12", "HEAD"])
        .current_dir(root)
        .output();
    match out {
        Ok(o) if o.status.success() => {
            let s = String::from_utf8_lossy(&o.stdout).trim().to_string();
            if s.is_empty() {
                "unknown".to_string()
            } else {
                s
            }
        }
        _ => "unknown".to_string(),
    }
}

fn main() {
    let root =
        PathBuf::from(env::var("CARGO_MANIFEST_DIR").expect("cargo sets CARGO_MANIFEST_DIR"));

    // Git revision; rerun when HEAD moves (branch switch or new commit).
    let git = root.join(".git");
    for p in ["HEAD", "refs/heads", "packed-refs"] {
        let path = git.join(p);
        if path.exists() {
            println!("cargo:rerun-if-changed={}", path.display());
        }
    }
    println!("cargo:rustc-env=KZERO_GIT_REV={}", git_revision(&root));

    // Bundled outside checks.
    let dir = root.join("data-checks");
    println!("cargo:rerun-if-changed={}", dir.display());
    let mut files: Vec<PathBuf> = fs::read_dir(&dir)
        .map(|rd| {
            rd.filter_map(|e| e.ok().map(|e| e.path()))
                .filter(|p| p.extension().is_some_and(|x| x == "csv"))
                .collect()
        })
        .unwrap_or_default();
    files.sort();
    let mut code = String::from("/// Bundled data-checks files: (file name, contents).\n");
    code.push_str("pub const BUNDLED: &[(&str, &str)] = &[\n");
    for f in &files {
        let name = f
            .file_name()
            .unwrap_or_default()
            .to_string_lossy()
            .to_string();
        code.push_str(&format!(
            "    ({:?}, include_str!({:?})),\n",
            name,
            f.display().to_string()
        ));
    }
    code.push_str("];\n");
    let out =
        PathBuf::from(env::var("OUT_DIR").expect("cargo sets OUT_DIR")).join("data_checks.rs");
    fs::write(out, code).expect("write data_checks.rs");
}
