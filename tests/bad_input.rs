//! Bad input reaches the user as a clear message and exit code 2, never as a panic: each case runs
//! the built `nestor` binary on a bad configuration or bad options and checks the exit code, a
//! fragment of the message naming the key and what is allowed, and that nothing reached stdout.
//! Also checks that a legal but questionable input only warns, that `--set` changes the result,
//! and the keys of `check --json`.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};
use std::sync::atomic::{AtomicUsize, Ordering};

static COUNTER: AtomicUsize = AtomicUsize::new(0);

/// A configuration written to a uniquely named temporary file, removed on drop.
struct TempConfig(PathBuf);

impl TempConfig {
    fn new(tag: &str, text: &str) -> Self {
        let n = COUNTER.fetch_add(1, Ordering::Relaxed);
        let path = std::env::temp_dir().join(format!(
            "nestor-bad-input-{}-{n}-{tag}.toml",
            std::process::id()
        ));
        std::fs::write(&path, text).expect("write a temporary configuration");
        TempConfig(path)
    }

    fn path(&self) -> &str {
        self.0.to_str().expect("temporary path is UTF-8")
    }
}

impl Drop for TempConfig {
    fn drop(&mut self) {
        let _ = std::fs::remove_file(&self.0);
    }
}

/// A uniquely named temporary directory path (for `scan --out`), removed on drop.
struct TempDir(PathBuf);

impl TempDir {
    fn new(tag: &str) -> Self {
        let n = COUNTER.fetch_add(1, Ordering::Relaxed);
        TempDir(
            std::env::temp_dir().join(format!("nestor-bad-input-{}-{n}-{tag}", std::process::id())),
        )
    }

    fn path(&self) -> &str {
        self.0.to_str().expect("temporary path is UTF-8")
    }
}

impl Drop for TempDir {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.0);
    }
}

fn nestor(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_nestor"))
        .args(args)
        .env_remove("RUST_BACKTRACE")
        .output()
        .expect("run the nestor binary")
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

/// Asserts a bad-input outcome: exit 2, every fragment in stderr, no panic, empty stdout.
fn assert_bad(case: &str, out: &Output, fragments: &[&str]) {
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
fn check_bad(case: &str, config: &str, fragments: &[&str]) {
    let cfg = TempConfig::new("check", config);
    let out = nestor(&["check", cfg.path()]);
    assert_bad(case, &out, fragments);
}

/// Runs `nestor ARGS...` with the configuration path in place of "{cfg}".
fn run_with(config: &str, args: &[&str]) -> Output {
    let cfg = TempConfig::new("cli", config);
    let args: Vec<&str> = args
        .iter()
        .map(|a| if *a == "{cfg}" { cfg.path() } else { a })
        .collect();
    nestor(&args)
}

fn pocket(name: &str, kind: &str, body: &str) -> String {
    format!("[[pocket]]\nname = \"{name}\"\nkind = \"{kind}\"\ncenter = [0.0, 0.0]\n{body}\n\n")
}

fn channel(a: &str, b: &str, body: &str) -> String {
    format!("[[channel]]\nname = \"{a}{b}\"\npockets = [\"{a}\", \"{b}\"]\n{body}\n\n")
}

const E_BODY: &str = "mass = 0.2\noffset = -100.0";
const H_BODY: &str = "mass = 0.2\noffset = 100.0";
const CH_BODY: &str = "lambda = 0.25\ncutoff = 5.0";

/// Electron pocket "e", hole pocket "h", channel "eh", with the given bodies.
fn pair(e: &str, h: &str, ch: &str) -> String {
    pocket("e", "electron", e) + &pocket("h", "hole", h) + &channel("e", "h", ch)
}

/// A well-formed perfectly nested configuration.
fn nested() -> String {
    pair(E_BODY, H_BODY, CH_BODY)
}

/// A hole-like Dirac pocket "D" with the electron pocket "e" and channel "eD".
fn with_dirac(d: &str, ch: &str) -> String {
    pocket("e", "electron", "mass = 0.2\noffset = -10.0")
        + &pocket("D", "dirac", d)
        + &channel("e", "D", ch)
}

// Sanity of the fixtures: the unmodified base configurations are accepted.
#[test]
fn base_configurations_are_accepted() {
    for (case, config) in [
        ("nested", nested()),
        (
            "dirac",
            with_dirac(
                "velocity = 300.0\noffset = 10.0",
                "lambda = 0.2\ncutoff = 5.0",
            ),
        ),
    ] {
        let cfg = TempConfig::new("ok", &config);
        let out = nestor(&["check", cfg.path()]);
        assert_eq!(out.status.code(), Some(0), "{case}: {}", text(&out.stderr));
    }
}

// TOML syntax errors, including an overflowing float literal, are reported as such.
#[test]
fn toml_syntax_errors() {
    check_bad(
        "unclosed table header",
        "[[pocket]\nname = \"e\"\n",
        &["not valid TOML", "line 1"],
    );
    check_bad(
        "float overflow 1e400",
        &pair("mass = 1e400\noffset = -100.0", H_BODY, CH_BODY),
        &["not valid TOML", "mass = 1e400"],
    );
}

// Unknown keys at the top level, in a pocket, in a channel and in a spin table.
#[test]
fn unknown_keys() {
    check_bad(
        "unknown top-level key",
        &format!("temperature = 4.0\n{}", nested()),
        &[
            "top level",
            "`temperature`",
            "unknown key",
            "allowed keys: pocket, channel, surface",
        ],
    );
    check_bad(
        "misspelt pocket key",
        &pair("mas = 0.2\noffset = -100.0", H_BODY, CH_BODY),
        &["pocket \"e\"", "`mas`", "unknown key", "mass", "offset"],
    );
    check_bad(
        "unknown channel key",
        &pair(E_BODY, H_BODY, "lambda = 0.25\ncutoff = 5.0\nwidth = 2.0"),
        &["channel \"eh\"", "`width`", "unknown key", "cutoff"],
    );
    check_bad(
        "unknown spin key",
        &pair(
            E_BODY,
            "mass = 0.2\noffset = 100.0\nspin = { winding = 1, tilt = 3.0 }",
            CH_BODY,
        ),
        &["`tilt`", "unknown key", "winding, phase"],
    );
}

// Each required key, when missing, is named together with what it should hold.
#[test]
fn missing_keys() {
    check_bad(
        "missing kind",
        "[[pocket]]\nname = \"e\"\ncenter = [0.0, 0.0]\nmass = 0.2\noffset = -100.0\n",
        &[
            "pocket \"e\"",
            "`kind`",
            "missing",
            "\"electron\", \"hole\" or \"dirac\"",
        ],
    );
    check_bad(
        "missing center",
        "[[pocket]]\nname = \"e\"\nkind = \"electron\"\nmass = 0.2\noffset = -100.0\n",
        &["pocket \"e\"", "`center`", "missing", "[kx, ky] in 1/nm"],
    );
    check_bad(
        "missing offset",
        &pair("mass = 0.2", H_BODY, CH_BODY),
        &["pocket \"e\"", "`offset`", "missing", "meV"],
    );
    check_bad(
        "missing mass",
        &pair("offset = -100.0", H_BODY, CH_BODY),
        &["`mass`", "missing", "`kf`", "`vf`"],
    );
    check_bad(
        "missing Dirac velocity",
        &with_dirac("offset = 10.0", "lambda = 0.2\ncutoff = 5.0"),
        &["pocket \"D\"", "`velocity`", "missing", "meV nm"],
    );
    check_bad(
        "missing cutoff",
        &pair(E_BODY, H_BODY, "lambda = 0.25"),
        &["channel \"eh\"", "`cutoff`", "missing", "meV"],
    );
    check_bad(
        "missing lambda or g",
        &pair(E_BODY, H_BODY, "cutoff = 5.0"),
        &[
            "channel \"eh\"",
            "`lambda`",
            "missing",
            "0 < lambda <= 10",
            "`g`",
        ],
    );
    check_bad(
        "no pockets",
        "[surface]\nlattice = \"square\"\na = 0.4\n",
        &[
            "top level",
            "`pocket`",
            "missing",
            "at least one [[pocket]]",
        ],
    );
}

// Names: duplicates, a channel naming a missing pocket, a channel reusing a pocket's name.
#[test]
fn names() {
    check_bad(
        "duplicate pocket names",
        &(pocket("e", "electron", E_BODY) + &pocket("e", "hole", H_BODY)),
        &["pocket \"e\"", "`name`", "duplicate", "unique"],
    );
    check_bad(
        "channel names a missing pocket",
        &(pocket("e", "electron", E_BODY)
            + &pocket("h", "hole", H_BODY)
            + &channel("e", "x", CH_BODY)),
        &[
            "`pockets`",
            "no pocket is named \"x\"",
            "pockets: \"e\", \"h\"",
        ],
    );
    check_bad(
        "channel named like a pocket",
        &(pocket("e", "electron", E_BODY)
            + &pocket("h", "hole", H_BODY)
            + "[[channel]]\nname = \"h\"\npockets = [\"e\", \"h\"]\nlambda = 0.25\ncutoff = 5.0\n"),
        &["`name`", "`h` is already used"],
    );
    check_bad(
        "pocket name with a dot",
        &(pocket("e.1", "electron", E_BODY) + &pocket("h", "hole", H_BODY)),
        &["`name`", "none of . = [ ]"],
    );
}

// Channel pockets must be electron-like then hole-like.
#[test]
fn channel_pocket_order() {
    check_bad(
        "hole-like pocket first",
        &(pocket("e", "electron", E_BODY)
            + &pocket("h", "hole", H_BODY)
            + &channel("h", "e", CH_BODY)),
        &[
            "`pockets`",
            "first pocket must be electron-like",
            "\"h\" is hole-like",
            "swap them: [\"e\", \"h\"]",
        ],
    );
    check_bad(
        "two electron-like pockets",
        &(pocket("e", "electron", E_BODY)
            + &pocket("f", "electron", E_BODY)
            + &channel("e", "f", CH_BODY)),
        &[
            "`pockets`",
            "second pocket must be hole-like",
            "\"f\" is electron-like",
        ],
    );
    check_bad(
        "the same pocket twice",
        &(pocket("e", "electron", E_BODY) + &channel("e", "e", CH_BODY)),
        &["`pockets`", "must differ"],
    );
}

// Offsets that leave a pocket without a Fermi surface.
#[test]
fn offsets_without_fermi_surface() {
    check_bad(
        "electron pocket with offset > 0",
        &pair("mass = 0.2\noffset = 5.0", H_BODY, CH_BODY),
        &["pocket \"e\"", "`offset`", "offset < 0", "no Fermi surface"],
    );
    check_bad(
        "hole pocket with offset < 0",
        &pair(E_BODY, "mass = 0.2\noffset = -5.0", CH_BODY),
        &["pocket \"h\"", "`offset`", "offset > 0", "no Fermi surface"],
    );
    check_bad(
        "Dirac pocket with offset 0",
        &with_dirac(
            "velocity = 300.0\noffset = 0.0",
            "lambda = 0.2\ncutoff = 5.0",
        ),
        &["pocket \"D\"", "`offset`", "0 meV", "must be non-zero"],
    );
    check_bad(
        "offset out of range",
        &pair("mass = 0.2\noffset = -2e5", H_BODY, CH_BODY),
        &["`offset`", "|offset| <= 1e5 meV"],
    );
}

// Masses and velocities must be finite and positive, with the allowed range in the message.
#[test]
fn masses_and_velocities() {
    check_bad(
        "negative mass",
        &pair("mass = -0.2\noffset = -100.0", H_BODY, CH_BODY),
        &[
            "pocket \"e\"",
            "`mass`",
            "-0.2 is out of range",
            "(0, 1000]",
        ],
    );
    check_bad(
        "zero mass",
        &pair(E_BODY, "mass = 0.0\noffset = 100.0", CH_BODY),
        &["pocket \"h\"", "`mass`", "0 is out of range", "(0, 1000]"],
    );
    check_bad(
        "nan mass",
        &pair("mass = nan\noffset = -100.0", H_BODY, CH_BODY),
        &["`mass`", "non-finite", "(0, 1000]"],
    );
    check_bad(
        "mass pair of one component",
        &pair("mass = [0.2]\noffset = -100.0", H_BODY, CH_BODY),
        &["`mass`", "1 components", "[x, y]", "(0, 1000]"],
    );
    check_bad(
        "infinite velocity",
        &with_dirac(
            "velocity = inf\noffset = 10.0",
            "lambda = 0.2\ncutoff = 5.0",
        ),
        &["pocket \"D\"", "`velocity`", "non-finite", "(0, 100000]"],
    );
    check_bad(
        "negative velocity",
        &with_dirac(
            "velocity = -300.0\noffset = 10.0",
            "lambda = 0.2\ncutoff = 5.0",
        ),
        &["`velocity`", "-300 is out of range", "(0, 100000] meV nm"],
    );
    check_bad(
        "zero velocity component",
        &with_dirac(
            "velocity = [300.0, 0.0]\noffset = 10.0",
            "lambda = 0.2\ncutoff = 5.0",
        ),
        &["`velocity`", "0 is out of range", "(0, 100000]"],
    );
    check_bad(
        "mass given as a string",
        &pair("mass = \"light\"\noffset = -100.0", H_BODY, CH_BODY),
        &["`mass`", "got a string", "(0, 1000]"],
    );
}

// Keys that exclude each other, or belong to another pocket kind.
#[test]
fn conflicting_keys() {
    check_bad(
        "both mass and kf",
        &pair("mass = 0.2\noffset = -100.0\nkf = 0.7", H_BODY, CH_BODY),
        &["pocket \"e\"", "`mass`", "`kf`", "not both"],
    );
    check_bad(
        "offset with kf and vf",
        &pair("kf = 0.7\nvf = 270.0\noffset = -100.0", H_BODY, CH_BODY),
        &["`offset`", "not allowed with `kf` + `vf`"],
    );
    check_bad(
        "velocity on an electron pocket",
        &pair(
            "mass = 0.2\noffset = -100.0\nvelocity = 300.0",
            H_BODY,
            CH_BODY,
        ),
        &["pocket \"e\"", "`velocity`", "is for \"dirac\" pockets"],
    );
    check_bad(
        "mass on a Dirac pocket",
        &with_dirac(
            "velocity = 300.0\noffset = 10.0\nmass = 0.2",
            "lambda = 0.2\ncutoff = 5.0",
        ),
        &["pocket \"D\"", "`mass`", "takes `velocity`"],
    );
    check_bad(
        "both lambda and g",
        &pair(E_BODY, H_BODY, "lambda = 0.25\ng = 500.0\ncutoff = 5.0"),
        &["channel \"eh\"", "`lambda`", "`g`", "not both"],
    );
    check_bad(
        "unknown pocket kind",
        &pocket("e", "metal", E_BODY),
        &[
            "`kind`",
            "`metal` is not a pocket kind",
            "\"electron\", \"hole\", \"dirac\"",
        ],
    );
}

// Channel values: coupling range, spin matrix, overlap, cutoff.
#[test]
fn channel_values() {
    check_bad(
        "lambda above range",
        &pair(E_BODY, H_BODY, "lambda = 12.0\ncutoff = 5.0"),
        &["`lambda`", "12 is out of range", "(0, 10]"],
    );
    check_bad(
        "lambda zero",
        &pair(E_BODY, H_BODY, "lambda = 0.0\ncutoff = 5.0"),
        &["`lambda`", "0 is out of range", "(0, 10]"],
    );
    check_bad(
        "negative g",
        &pair(E_BODY, H_BODY, "g = -5.0\ncutoff = 5.0"),
        &["`g`", "-5 is out of range", "meV nm^2"],
    );
    check_bad(
        "unknown spin_matrix",
        &pair(
            E_BODY,
            H_BODY,
            "lambda = 0.25\ncutoff = 5.0\nspin_matrix = \"w\"",
        ),
        &[
            "`spin_matrix`",
            "not allowed",
            "\"1\", \"x\", \"y\" or \"z\"",
        ],
    );
    check_bad(
        "overlap out of range",
        &pair(
            E_BODY,
            H_BODY,
            "lambda = 0.25\ncutoff = 5.0\noverlap = -1.0",
        ),
        &["`overlap`", "[0, 10]"],
    );
    check_bad(
        "negative cutoff",
        &pair(E_BODY, H_BODY, "lambda = 0.25\ncutoff = -5.0"),
        &["`cutoff`", "-5 is out of range", "(0, 10000] meV"],
    );
}

// Spin textures: the winding must be 1 or -1, and the spin key a string or a table.
#[test]
fn spin_textures() {
    check_bad(
        "winding 2",
        &with_dirac(
            "velocity = 300.0\noffset = 10.0\nspin = { winding = 2, phase = 0.0 }",
            "lambda = 0.2\ncutoff = 5.0",
        ),
        &["pocket \"D\" spin", "`winding`", "expected 1 or -1, got 2"],
    );
    check_bad(
        "winding missing",
        &with_dirac(
            "velocity = 300.0\noffset = 10.0\nspin = { phase = 30.0 }",
            "lambda = 0.2\ncutoff = 5.0",
        ),
        &["`winding`", "missing", "1 or -1"],
    );
    check_bad(
        "unknown spin string",
        &with_dirac(
            "velocity = 300.0\noffset = 10.0\nspin = \"up\"",
            "lambda = 0.2\ncutoff = 5.0",
        ),
        &["`spin`", "\"degenerate\"", "winding = 1 or -1"],
    );
}

// A shell that reaches a Dirac point: the Dirac point at 10 meV lies inside a 30 meV shell.
#[test]
fn shell_reaching_a_dirac_point() {
    check_bad(
        "cutoff past the Dirac point",
        &with_dirac(
            "velocity = 300.0\noffset = 10.0",
            "lambda = 0.2\ncutoff = 30.0",
        ),
        &[
            "channel \"eD\"",
            "`cutoff`",
            "reaches a Dirac point",
            "must be below 10",
        ],
    );
}

// `lambda` cannot be converted when the form factor kills the pair density of states; asks for `g`.
#[test]
fn lambda_with_vanishing_pair_density() {
    let cones = |ch: &str| {
        pocket(
            "A",
            "dirac",
            "velocity = 300.0\noffset = -50.0\nspin = { winding = 1, phase = 0.0 }",
        ) + &pocket(
            "B",
            "dirac",
            "velocity = 300.0\noffset = 50.0\nspin = { winding = 1, phase = 0.0 }",
        ) + &channel("A", "B", ch)
    };
    check_bad(
        "vanishing pair density with lambda",
        &cones("lambda = 0.2\nspin_matrix = \"1\"\ncutoff = 5.0"),
        &["channel \"AB\"", "`lambda`", "vanishes", "give `g`"],
    );
    // With g the same channel is legal.
    let cfg = TempConfig::new(
        "cones-g",
        &cones("g = 100.0\nspin_matrix = \"1\"\ncutoff = 5.0"),
    );
    let out = nestor(&["check", cfg.path()]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
}

// The [surface] table: rectangular needs b, others refuse it, the lattice must be known.
#[test]
fn surface_table() {
    let with_surface = |s: &str| format!("[surface]\n{s}\n\n{}", nested());
    check_bad(
        "rectangular without b",
        &with_surface("lattice = \"rectangular\"\na = 0.4"),
        &[
            "[surface]",
            "`b`",
            "missing",
            "rectangular lattice needs `b`",
        ],
    );
    check_bad(
        "square with b",
        &with_surface("lattice = \"square\"\na = 0.4\nb = 0.5"),
        &["[surface]", "`b`", "only a rectangular lattice"],
    );
    check_bad(
        "unknown lattice",
        &with_surface("lattice = \"oblique\"\na = 0.4"),
        &["`lattice`", "`oblique` is not a lattice", "\"square\""],
    );
    check_bad(
        "zero lattice constant",
        &with_surface("lattice = \"square\"\na = 0.0"),
        &["`a`", "(0, 1000] nm"],
    );
}

// A centre must have two components; kf and vf must give a usable band edge.
#[test]
fn centre_and_kf_vf() {
    check_bad(
        "centre with three components",
        &("[[pocket]]\nname = \"e\"\nkind = \"electron\"\ncenter = [0.0, 0.0, 1.0]\n".to_string()
            + E_BODY),
        &["`center`", "[kx, ky] in 1/nm", "3 components"],
    );
    check_bad(
        "kf vf band edge underflows",
        &pair("kf = 1e-300\nvf = 1e-300", H_BODY, CH_BODY),
        &["pocket \"e\"", "`vf`", "kf vf / 2", "allowed"],
    );
}

// Bad `--set`: unknown name, non-numeric value, unknown key, wrong section, no '=', non-finite.
#[test]
fn bad_set() {
    let cases: &[(&str, &str, &[&str])] = &[
        (
            "unknown name",
            "zz.offset=3",
            &["zz.offset", "no pocket or channel is named `zz`"],
        ),
        (
            "non-numeric value",
            "e.offset=abc",
            &["--set e.offset=abc", "`abc` is not a number"],
        ),
        (
            "unknown key",
            "e.colour=1",
            &["`colour` is not a numeric key", "pocket keys: offset"],
        ),
        (
            "channel key on a pocket",
            "e.cutoff=3",
            &["`e` is a pocket", "its numeric keys are offset"],
        ),
        (
            "pocket key on a channel",
            "eh.offset=3",
            &["`eh` is a channel", "lambda, g, cutoff, overlap"],
        ),
        ("no value", "e.offset", &["--set e.offset", "PATH=VALUE"]),
        ("no key", "e=3", &["PATH must be NAME.key"]),
        (
            "nan value",
            "e.offset=nan",
            &["--set e.offset=nan", "must be finite"],
        ),
        (
            "centre without component",
            "e.center=1",
            &["center has two components", "center.x"],
        ),
        (
            "value out of range",
            "e.mass=-1",
            &["`mass`", "-1 is out of range", "(0, 1000]"],
        ),
        (
            "surface without a [surface] table",
            "surface.a=0.5",
            &["surface.a", "no [surface] table"],
        ),
    ];
    for (case, set, fragments) in cases {
        let out = run_with(&nested(), &["check", "{cfg}", "--set", set]);
        assert_bad(&format!("--set {case}"), &out, fragments);
    }
}

// Bad `--vary`: malformed range, N = 0, unknown key or name, the same path twice.
#[test]
fn bad_vary() {
    let cases: &[(&str, &[&str], &[&str])] = &[
        (
            "two fields",
            &["e.offset=1:2"],
            &["--vary e.offset=1:2", "PATH=FROM:TO:N"],
        ),
        (
            "N = 0",
            &["e.offset=-101:-99:0"],
            &["--vary e.offset=-101:-99:0", "N from 1 to 100000"],
        ),
        (
            "non-numeric bound",
            &["e.offset=a:-99:3"],
            &["--vary e.offset=a:-99:3", "PATH=FROM:TO:N"],
        ),
        (
            "unknown key",
            &["e.colour=1:2:3"],
            &["--vary e.colour", "`colour` is not a numeric key"],
        ),
        (
            "unknown name",
            &["zz.offset=1:2:3"],
            &["--vary zz.offset", "no pocket or channel is named `zz`"],
        ),
        (
            "same path twice",
            &["e.offset=-101:-99:2", "e.offset=-101:-99:2"],
            &["--vary", "e.offset is given twice"],
        ),
    ];
    for (case, varies, fragments) in cases {
        let out_dir = TempDir::new("scan");
        let mut args = vec!["scan", "{cfg}", "--out", out_dir.path()];
        for v in *varies {
            args.extend(["--vary", v]);
        }
        let out = run_with(&nested(), &args);
        assert_bad(&format!("--vary {case}"), &out, fragments);
    }
}

// Bad options and files: --rtol out of range or not a number, --threads 0, a missing file, tc
// without channels.
#[test]
fn bad_options_and_files() {
    for rtol in ["1", "0", "1e-20", "nan"] {
        let out = run_with(&nested(), &["tc", "{cfg}", "--rtol", rtol]);
        assert_bad(
            &format!("--rtol {rtol}"),
            &out,
            &["--rtol", "[1e-12, 1e-3]"],
        );
    }
    let out = run_with(&nested(), &["tc", "{cfg}", "--rtol", "abc"]);
    assert_bad("--rtol abc", &out, &["'abc'", "--rtol"]);
    let out_dir = TempDir::new("threads");
    let out = run_with(
        &nested(),
        &[
            "scan",
            "{cfg}",
            "--vary",
            "e.offset=-101:-99:2",
            "--threads",
            "0",
            "--out",
            out_dir.path(),
        ],
    );
    assert_bad("--threads 0", &out, &["--threads 0", "[1, 1024]"]);

    let missing = std::env::temp_dir().join(format!(
        "nestor-bad-input-{}-does-not-exist.toml",
        std::process::id()
    ));
    assert!(!Path::new(&missing).exists());
    let missing = missing.to_str().expect("UTF-8 path");
    let out = nestor(&["check", missing]);
    assert_bad(
        "missing file",
        &out,
        &["cannot read configuration", missing],
    );

    let no_channels = pocket("e", "electron", E_BODY) + &pocket("h", "hole", H_BODY);
    let out = run_with(&no_channels, &["tc", "{cfg}"]);
    assert_bad("tc without channels", &out, &["no [[channel]]"]);
}

// A shell reaching past a parabolic band bottom is legal: exit 0 with a warning on stderr.
#[test]
fn shell_past_band_bottom_warns() {
    let config = pair(
        "mass = 0.2\noffset = -3.0",
        "mass = 0.2\noffset = 3.0",
        "lambda = 0.2\ncutoff = 5.0",
    );
    let out = run_with(&config, &["check", "{cfg}"]);
    let stderr = text(&out.stderr);
    assert_eq!(out.status.code(), Some(0), "stderr: {stderr}");
    assert!(stderr.contains("warning"), "stderr: {stderr}");
    assert!(stderr.contains("band bottom"), "stderr: {stderr}");
    assert!(!stderr.contains("panicked"), "stderr: {stderr}");
    assert!(!out.stdout.is_empty());
}

fn check_json(config: &str, sets: &[&str]) -> serde_json::Value {
    let mut args = vec!["check", "{cfg}", "--json"];
    for s in sets {
        args.extend(["--set", s]);
    }
    let out = run_with(config, &args);
    assert_eq!(out.status.code(), Some(0), "stderr: {}", text(&out.stderr));
    serde_json::from_slice(&out.stdout).expect("check --json prints JSON")
}

fn num(v: &serde_json::Value, what: &str) -> f64 {
    v.as_f64()
        .unwrap_or_else(|| panic!("{what} is not a number: {v}"))
}

// `--set h.offset=105` moves the hole band edge and the mismatch h = (E0e + E0h)/2 to 2.5 meV.
#[test]
fn set_changes_the_result() {
    let before = check_json(&nested(), &[]);
    let after = check_json(&nested(), &["h.offset=105"]);
    assert_eq!(num(&before["pockets"][1]["offset_meV"], "offset"), 100.0);
    assert_eq!(num(&after["pockets"][1]["offset_meV"], "offset"), 105.0);
    let h0 = num(&before["channels"][0]["mismatch_meV"], "mismatch");
    let h1 = num(&after["channels"][0]["mismatch_meV"], "mismatch");
    assert!(h0.abs() < 1e-9, "mismatch before: {h0}");
    assert!((h1 - 2.5).abs() < 1e-9, "mismatch after: {h1}");
    // A channel override too: lambda is echoed back, g follows lambda / nu.
    let l = check_json(&nested(), &["eh.lambda=0.3"]);
    assert!((num(&l["channels"][0]["lambda"], "lambda") - 0.3).abs() < 1e-12);
}

// `check --json` on the demonstration surface parses and has the documented keys.
#[test]
fn check_json_has_the_keys() {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("configs/demo_surface.toml");
    let config = std::fs::read_to_string(path).expect("read the demo configuration");
    let v = check_json(&config, &[]);
    let pockets = v["pockets"].as_array().expect("pockets is an array");
    let names: Vec<&str> = pockets
        .iter()
        .map(|p| p["name"].as_str().expect("pocket name"))
        .collect();
    assert_eq!(names, ["G", "X", "Y"]);
    for p in pockets {
        assert!(num(&p["density_per_nm2"], "density") > 0.0);
        assert!(num(&p["dos_per_meV_nm2"], "dos") > 0.0);
        let kf = p["kf_per_nm"].as_array().expect("kf_per_nm is an array");
        assert_eq!(kf.len(), 2);
        assert!(kf.iter().all(|k| num(k, "kf") > 0.0));
    }
    let channels = v["channels"].as_array().expect("channels is an array");
    assert_eq!(channels.len(), 2);
    for c in channels {
        let pair: Vec<&str> = c["pockets"]
            .as_array()
            .expect("channel pockets")
            .iter()
            .map(|p| p.as_str().expect("pocket name"))
            .collect();
        assert_eq!(pair.len(), 2);
        assert_eq!(pair[1], "G");
        let nu = num(&c["nu_per_meV_nm2"], "nu");
        let g = num(&c["g_meV_nm2"], "g");
        let lambda = num(&c["lambda"], "lambda");
        assert!(nu > 0.0 && g > 0.0);
        assert!((lambda - 0.35).abs() < 1e-9, "lambda {lambda}");
        assert!((g * nu - lambda).abs() < 1e-9 * lambda.max(1.0));
        assert!(num(&c["mismatch_meV"], "mismatch").is_finite());
    }
}

// `pattern`: bad temperatures, fields of view, paths, wavevector lists and channels are input
// errors naming the option and the allowed range, and nothing is written.
#[test]
fn bad_pattern_options() {
    let out_dir = TempDir::new("pattern");
    let o = out_dir.path();
    let cases: Vec<(Vec<&str>, Vec<&str>)> = vec![
        (
            vec!["--temperature", "0"],
            vec!["--temperature 0", "(0, 10000] K"],
        ),
        (
            vec!["--temperature=-1"],
            vec!["--temperature -1", "(0, 10000] K"],
        ),
        (
            vec!["--temperature", "nan"],
            vec!["--temperature", "(0, 10000] K"],
        ),
        (
            vec!["--temperature", "0.5", "--fov", "0"],
            vec!["--fov 0", "(0, 10000] nm"],
        ),
        (
            vec!["--temperature", "0.5", "--fov=-3"],
            vec!["--fov -3", "(0, 10000] nm"],
        ),
        (
            vec!["--temperature", "0.5", "--along", "x.offset"],
            vec!["--along x.offset", "no pocket"],
        ),
        (
            vec!["--temperature", "0.5", "--along", "offset"],
            vec!["--along"],
        ),
        (
            vec!["--temperature", "0.5", "--wavevectors", "1,2,3"],
            vec!["--wavevectors 1,2,3", "qx,qy"],
        ),
        (
            vec!["--temperature", "0.5", "--wavevectors", "0.01,0;0,0"],
            vec!["--wavevectors", "zero"],
        ),
        (
            vec!["--temperature", "0.5", "--channel", "zz"],
            vec!["--channel zz", "no such channel"],
        ),
    ];
    for (extra, fragments) in cases {
        let mut args = vec!["pattern", "{cfg}", "--out", o];
        args.extend(extra.iter().copied());
        let out = run_with(&nested(), &args);
        assert_bad(&format!("pattern {extra:?}"), &out, &fragments);
        assert!(
            !Path::new(o).exists(),
            "pattern {extra:?}: the output directory was created"
        );
    }
}
