//! Helpers shared by the tests that run the `skyclock` program: a fresh working folder and
//! a run that must succeed. Use with `#[path = "common/cli.rs"] mod cli;`.
#![allow(dead_code)]

use std::path::PathBuf;
use std::process::Command;

/// The program built for this test run.
pub fn skyclock() -> Command {
    Command::new(env!("CARGO_BIN_EXE_skyclock"))
}

/// An empty-or-reused working folder for one test, unique to this process.
pub fn workdir(suite: &str, name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("skyclock_{suite}_{name}_{}", std::process::id()));
    std::fs::create_dir_all(&d).unwrap();
    d
}

/// Runs `skyclock args…`, fails the test with its stderr unless it exits 0, returns stdout.
pub fn run_ok(args: &[&str]) -> String {
    let out = skyclock().args(args).output().expect("run skyclock");
    assert!(out.status.success(), "skyclock {args:?} failed:\n{}", String::from_utf8_lossy(&out.stderr));
    String::from_utf8(out.stdout).expect("stdout is UTF-8")
}

/// The stdout of a finished run, failing the test with its stderr unless it exited 0.
pub fn stdout_of(o: &std::process::Output) -> String {
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    String::from_utf8(o.stdout.clone()).expect("stdout is UTF-8")
}
