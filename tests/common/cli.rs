//! Running the built `nestor` binary from the integration tests: temporary configurations and
//! output directories, the bad-input assertion (exit code 2, message fragments, no panic, empty
//! stdout), and small builders of configuration text for the command-line tests.

use std::path::PathBuf;
use std::process::{Command, Output};
use std::sync::atomic::{AtomicUsize, Ordering};

static COUNTER: AtomicUsize = AtomicUsize::new(0);

/// A configuration written to a uniquely named temporary file, removed on drop.
pub struct TempConfig(pub PathBuf);

impl TempConfig {
    pub fn new(tag: &str, text: &str) -> Self {
        let n = COUNTER.fetch_add(1, Ordering::Relaxed);
        let path = std::env::temp_dir().join(format!(
            "nestor-bad-input-{}-{n}-{tag}.toml",
            std::process::id()
        ));
        std::fs::write(&path, text).expect("write a temporary configuration");
        TempConfig(path)
    }

    pub fn path(&self) -> &str {
        self.0.to_str().expect("temporary path is UTF-8")
    }
}

impl Drop for TempConfig {
    fn drop(&mut self) {
        let _ = std::fs::remove_file(&self.0);
    }
}

/// A uniquely named temporary directory path (for `scan --out`), removed on drop.
pub struct TempDir(pub PathBuf);

impl TempDir {
    pub fn new(tag: &str) -> Self {
        let n = COUNTER.fetch_add(1, Ordering::Relaxed);
        TempDir(
            std::env::temp_dir().join(format!("nestor-bad-input-{}-{n}-{tag}", std::process::id())),
        )
    }

    pub fn path(&self) -> &str {
        self.0.to_str().expect("temporary path is UTF-8")
    }
}

impl Drop for TempDir {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.0);
    }
}

pub fn nestor(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_nestor"))
        .args(args)
        .env_remove("RUST_BACKTRACE")
        .output()
        .expect("run the nestor binary")
}

pub fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

/// Asserts a bad-input outcome: exit 2, every fragment in stderr, no panic, empty stdout.
pub fn assert_bad(case: &str, out: &Output, fragments: &[&str]) {
    let stderr = text(&out.stderr);
    let stdout = text(&out.stdout);
    assert_eq!(
        out.status.code(),
        Some(2),
        "{case}: expected exit 2 (bad input)\nstderr: {stderr}\nstdout: {stdout}"
    );
    for f in fragments {
        assert!(
            stderr.contains(f),
            "{case}: stderr lacks {f:?}\nstderr: {stderr}"
        );
    }
    assert!(
        !stderr.contains("panicked") && !stderr.contains("RUST_BACKTRACE"),
        "{case}: panicked\nstderr: {stderr}"
    );
    assert!(stdout.is_empty(), "{case}: stdout not empty: {stdout}");
}

/// Runs `nestor check` on the configuration text and asserts bad input with these fragments.
pub fn check_bad(case: &str, config: &str, fragments: &[&str]) {
    let cfg = TempConfig::new("check", config);
    let out = nestor(&["check", cfg.path()]);
    assert_bad(case, &out, fragments);
}

/// Runs `nestor ARGS...` with the configuration path in place of "{cfg}".
pub fn run_with(config: &str, args: &[&str]) -> Output {
    let cfg = TempConfig::new("cli", config);
    let args: Vec<&str> = args
        .iter()
        .map(|a| if *a == "{cfg}" { cfg.path() } else { a })
        .collect();
    nestor(&args)
}

/// A pocket at the zone centre (see [`super::pocket_toml`]).
pub fn pocket(name: &str, kind: &str, body: &str) -> String {
    super::pocket_toml(name, kind, [0.0, 0.0], body)
}

/// A channel table (see [`super::channel_toml`]).
pub fn channel(a: &str, b: &str, body: &str) -> String {
    super::channel_toml(a, b, body)
}

pub const E_BODY: &str = "mass = 0.2\noffset = -100.0";
pub const H_BODY: &str = "mass = 0.2\noffset = 100.0";
pub const CH_BODY: &str = "lambda = 0.25\ncutoff = 5.0";

/// Electron pocket "e", hole pocket "h", channel "eh", with the given bodies.
pub fn pair(e: &str, h: &str, ch: &str) -> String {
    pocket("e", "electron", e) + &pocket("h", "hole", h) + &channel("e", "h", ch)
}

/// A well-formed perfectly nested configuration.
pub fn nested() -> String {
    pair(E_BODY, H_BODY, CH_BODY)
}

/// A hole-like Dirac pocket "D" with the electron pocket "e" and channel "eD".
pub fn with_dirac(d: &str, ch: &str) -> String {
    pocket("e", "electron", "mass = 0.2\noffset = -10.0")
        + &pocket("D", "dirac", d)
        + &channel("e", "D", ch)
}
