//! Build script of `kzero-engine`.
//!
//! * Embeds the git revision (`git rev-parse --short=12 HEAD`, or `unknown`)
//!   as the environment variable `KZERO_GIT_REV` for the provenance lines.
//! * Bundles every `data-checks/*.csv` file of the workspace into the
//!   library (the check runner works without the source tree): writes
//!   `$OUT_DIR/data_checks.rs` with a list of (file name, contents).

use std::env;
use std::fs;
use std::path::{Path, PathBuf};
use std::process::Command;

/// The output of `git <args>` run in `dir`, trimmed; `None` on any failure.
fn git(dir: &Path, args: &[&str]) -> Option<String> {
    let o = Command::new("git")
        .args(args)
        .current_dir(dir)
        .output()
        .ok()?;
    if !o.status.success() {
        return None;
    }
    let s = String::from_utf8_lossy(&o.stdout).trim().to_string();
    (!s.is_empty()).then_some(s)
}

fn main() {
    let manifest =
        PathBuf::from(env::var("CARGO_MANIFEST_DIR").expect("cargo sets CARGO_MANIFEST_DIR"));
    // The workspace root holds data-checks/ (crates/engine -> ../..).
    let root = manifest
        .parent()
        .and_then(Path::parent)
        .map(Path::to_path_buf)
        .unwrap_or_else(|| manifest.clone());

    // Git revision; rerun when HEAD moves (branch switch or new commit). In
    // a worktree the HEAD file and the shared refs live in different folders.
    let mut watch = Vec::new();
    if let Some(d) = git(&root, &["rev-parse", "--absolute-git-dir"]) {
        watch.push(PathBuf::from(d).join("HEAD"));
    }
    if let Some(d) = git(&root, &["rev-parse", "--git-common-dir"]) {
        let common = root.join(d);
        watch.push(common.join("refs").join("heads"));
        watch.push(common.join("packed-refs"));
    }
    for p in watch.iter().filter(|p| p.exists()) {
        println!("cargo:rerun-if-changed={}", p.display());
    }
    let rev = git(&root, &["rev-parse", "--short=12", "HEAD"]).unwrap_or_else(|| "unknown".into());
    println!("cargo:rustc-env=KZERO_GIT_REV={rev}");

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
        println!("cargo:rerun-if-changed={}", f.display());
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
