//! Interrupted runs: a run stopped in the middle of a long write (SIGINT, SIGTERM: the
//! program removes its unfinished files; SIGKILL: it cannot) leaves the previous output of
//! the same name byte-identical, and after the next run no `.partial` file remains. The
//! event list is invented (evenly spaced photon times); what an interrupted tool must leave
//! behind is common practice (atomic replacement: temporary file, then rename).

#[path = "common/cli.rs"]
mod cli;

use std::io::Write as _;
use std::path::{Path, PathBuf};
use std::process::{Child, Stdio};
use std::time::{Duration, Instant};

/// An invented event list of `n` photons, 0.37 s apart, with a pulse-height column.
fn write_events(path: &Path, n: usize) {
    let mut f = std::io::BufWriter::new(std::fs::File::create(path).unwrap());
    writeln!(f, "time,pha").unwrap();
    for i in 0..n {
        writeln!(f, "{:.6},{}", i as f64 * 0.37, i % 512).unwrap();
    }
}

fn barycentre_events(dir: &Path, input: &str) -> std::process::Command {
    let mut c = cli::skyclock();
    c.current_dir(dir).args([
        "barycentre-events",
        "--input",
        input,
        "--time-column",
        "time",
        "--time-zero",
        "2460420.5",
        "--ra",
        "10",
        "--dec",
        "20",
        "--output",
        "out.csv",
    ]);
    c
}

/// Hidden temporary files in `dir`.
fn partial_files(dir: &Path) -> Vec<PathBuf> {
    std::fs::read_dir(dir)
        .unwrap()
        .filter_map(|e| e.ok())
        .map(|e| e.path())
        .filter(|p| p.file_name().unwrap().to_string_lossy().contains(".partial"))
        .collect()
}

/// Waits until the running `child` has a temporary file in `dir` (it is writing), or fails
/// the test after 60 s or when the child ends first.
fn wait_for_partial(child: &mut Child, dir: &Path) {
    let start = Instant::now();
    while partial_files(dir).is_empty() {
        if let Some(status) = child.try_wait().unwrap() {
            panic!("the run ended ({status:?}) before its temporary file was seen; make the event list longer");
        }
        assert!(start.elapsed() < Duration::from_secs(60), "no temporary file appeared");
        std::thread::sleep(Duration::from_millis(2));
    }
}

/// A folder with a long event list, a short one, and a previous output `out.csv` made from
/// the short one.
fn prepared(case: &str) -> (PathBuf, Vec<u8>) {
    let d = cli::workdir("interrupts", case);
    for p in partial_files(&d) {
        std::fs::remove_file(p).unwrap();
    }
    write_events(&d.join("long.csv"), 2_000_000);
    write_events(&d.join("short.csv"), 100);
    let out = barycentre_events(&d, "short.csv").output().unwrap();
    cli::stdout_of(&out);
    let previous = std::fs::read(d.join("out.csv")).unwrap();
    (d, previous)
}

#[test]
fn sigkill_during_a_long_write_keeps_the_previous_output_and_the_next_run_removes_the_partial_file() {
    let (d, previous) = prepared("kill");
    let mut child = barycentre_events(&d, "long.csv").stdout(Stdio::null()).stderr(Stdio::null()).spawn().unwrap();
    wait_for_partial(&mut child, &d);
    child.kill().unwrap(); // SIGKILL
    let status = child.wait().unwrap();
    assert!(!status.success());
    assert!(std::fs::read(d.join("out.csv")).unwrap() == previous, "the previous output changed");
    // The next run writing the same output removes what the killed run left.
    let out = barycentre_events(&d, "short.csv").output().unwrap();
    cli::stdout_of(&out);
    assert_eq!(partial_files(&d), Vec::<PathBuf>::new());
    assert!(std::fs::read(d.join("out.csv")).unwrap() == previous, "the same input gives the same output");
}

#[test]
fn sigterm_and_sigint_remove_the_unfinished_file_and_exit_with_128_plus_the_signal() {
    for (signal, code) in [("-TERM", 143), ("-INT", 130)] {
        let (d, previous) = prepared(&format!("signal{code}"));
        let mut child = barycentre_events(&d, "long.csv").stdout(Stdio::null()).stderr(Stdio::piped()).spawn().unwrap();
        wait_for_partial(&mut child, &d);
        let sent = std::process::Command::new("kill").args([signal, &child.id().to_string()]).status().unwrap();
        assert!(sent.success(), "kill {signal} failed");
        let out = child.wait_with_output().unwrap();
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(code), "{signal}: {err}");
        assert!(err.contains("stopped by") && !err.contains("panicked"), "{signal}: {err}");
        assert_eq!(partial_files(&d), Vec::<PathBuf>::new(), "{signal}: a temporary file was left");
        assert!(std::fs::read(d.join("out.csv")).unwrap() == previous, "{signal}: the previous output changed");
    }
}
