//! A prerequisite that a test needs from outside the project (a shell, groff, a browser, a
//! JPL kernel). Outside CI a missing one is reported on stderr and the check is left out;
//! under `CI=true` (set by `.ci/run`, and by most CI services) the test fails instead, so
//! nothing is skipped silently there. `.ci/run` installs every one of them.

/// True when running under CI (`CI` set to `true` or `1`, any case).
pub fn in_ci() -> bool {
    std::env::var("CI").is_ok_and(|v| v.eq_ignore_ascii_case("true") || v == "1")
}

/// Reports that `what` is missing (with how to install it): panics under CI, prints a
/// `SKIPPED:` line on stderr otherwise. The caller returns (or continues) after it.
pub fn missing(what: &str, install: &str) {
    let message = format!("SKIPPED: {what} is missing (install: {install})");
    if in_ci() {
        panic!("CI=true and a prerequisite is missing, so this check would be skipped: {message}");
    }
    eprintln!("{message}");
}
