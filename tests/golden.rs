//! Golden outputs: every number that `check`, `tc`, `solve`, `scan`, `phases` and `pattern` print
//! for the cases in `tests/golden/cases.txt` must agree with the recorded output in
//! `tests/golden/expected/` to 1e-9 relative. The recorded files were written by the binary before
//! the library was redesigned; this test keeps restructuring from changing any computed number.
//!
//! Re-recording (`NESTOR_GOLDEN_RECORD=1 cargo test --release --test golden`) is for a deliberate
//! change of the numbers only, made in its own commit whose message says which numbers changed
//! and why.

use rayon::prelude::*;
use serde_json::Value;
use std::path::{Path, PathBuf};
use std::process::Command;

/// Relative agreement required of every number (the redesign keeps the arithmetic; 1e-9 leaves
/// room for a reordered sum and nothing more).
const REL: f64 = 1e-9;
/// Absolute floor for numbers that are rounding noise around zero (a mismatch of 2.8e-15 meV
/// where the exact value is 0).
const ABS: f64 = 1e-15;

struct Case {
    name: String,
    output: String,
    args: Vec<String>,
}

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn cases() -> Vec<Case> {
    let text = std::fs::read_to_string(root().join("tests/golden/cases.txt")).unwrap();
    text.lines()
        .filter(|l| !l.trim().is_empty() && !l.starts_with('#'))
        .map(|l| {
            let parts: Vec<&str> = l.splitn(3, '|').map(str::trim).collect();
            assert_eq!(parts.len(), 3, "bad case line: {l}");
            Case {
                name: parts[0].to_string(),
                output: parts[1].to_string(),
                args: parts[2].split_whitespace().map(String::from).collect(),
            }
        })
        .collect()
}

fn expected_path(case: &Case) -> PathBuf {
    let ext = if case.output == "stdout" {
        "json"
    } else {
        case.output.rsplit('.').next().unwrap()
    };
    root().join(format!("tests/golden/expected/{}.{ext}", case.name))
}

/// Runs one case and returns its output text.
fn run(case: &Case) -> String {
    let out_dir = std::env::temp_dir().join(format!(
        "nestor-golden-{}-{}",
        std::process::id(),
        case.name
    ));
    std::fs::create_dir_all(&out_dir).unwrap();
    let args: Vec<String> = case
        .args
        .iter()
        .map(|a| a.replace("{out}", out_dir.to_str().unwrap()))
        .collect();
    let result = Command::new(env!("CARGO_BIN_EXE_nestor"))
        .args(&args)
        .current_dir(root())
        .output()
        .unwrap();
    assert!(
        result.status.success(),
        "{}: exit {:?}\n{}",
        case.name,
        result.status.code(),
        String::from_utf8_lossy(&result.stderr)
    );
    let text = if case.output == "stdout" {
        String::from_utf8(result.stdout).unwrap()
    } else {
        std::fs::read_to_string(out_dir.join(&case.output)).unwrap()
    };
    std::fs::remove_dir_all(&out_dir).ok();
    text
}

fn numbers_agree(a: f64, b: f64) -> bool {
    a == b || (a - b).abs() <= REL * a.abs().max(b.abs()) || (a - b).abs() <= ABS
}

/// Compares two JSON values; pushes a line per difference.
fn compare_json(path: &str, want: &Value, got: &Value, diffs: &mut Vec<String>) {
    match (want, got) {
        (Value::Number(a), Value::Number(b)) => {
            let (a, b) = (a.as_f64().unwrap(), b.as_f64().unwrap());
            if !numbers_agree(a, b) {
                diffs.push(format!("{path}: {a:e} -> {b:e}"));
            }
        }
        (Value::Object(a), Value::Object(b)) => {
            for (k, va) in a {
                if k == "version" {
                    continue;
                }
                match b.get(k) {
                    Some(vb) => compare_json(&format!("{path}.{k}"), va, vb, diffs),
                    None => diffs.push(format!("{path}.{k}: missing")),
                }
            }
            for k in b.keys() {
                if !a.contains_key(k) {
                    diffs.push(format!("{path}.{k}: new key"));
                }
            }
        }
        (Value::Array(a), Value::Array(b)) => {
            if a.len() != b.len() {
                diffs.push(format!("{path}: length {} -> {}", a.len(), b.len()));
            } else {
                for (i, (x, y)) in a.iter().zip(b).enumerate() {
                    compare_json(&format!("{path}[{i}]"), x, y, diffs);
                }
            }
        }
        _ => {
            if want != got {
                diffs.push(format!("{path}: {want} -> {got}"));
            }
        }
    }
}

/// Compares two CSV texts cell by cell (numbers to REL, anything else exactly).
fn compare_csv(want: &str, got: &str, diffs: &mut Vec<String>) {
    let (w, g): (Vec<&str>, Vec<&str>) = (want.lines().collect(), got.lines().collect());
    if w.len() != g.len() {
        diffs.push(format!("rows {} -> {}", w.len(), g.len()));
        return;
    }
    for (row, (lw, lg)) in w.iter().zip(&g).enumerate() {
        let (cw, cg): (Vec<&str>, Vec<&str>) = (lw.split(',').collect(), lg.split(',').collect());
        if cw.len() != cg.len() {
            diffs.push(format!("row {row}: cells {} -> {}", cw.len(), cg.len()));
            continue;
        }
        for (col, (a, b)) in cw.iter().zip(&cg).enumerate() {
            let same = match (a.parse::<f64>(), b.parse::<f64>()) {
                (Ok(x), Ok(y)) => numbers_agree(x, y),
                _ => a == b,
            };
            if !same {
                diffs.push(format!("row {row} col {col}: {a} -> {b}"));
            }
        }
    }
}

fn check_case(case: &Case) -> Vec<String> {
    let got = run(case);
    let path = expected_path(case);
    if std::env::var_os("NESTOR_GOLDEN_RECORD").is_some() {
        std::fs::write(&path, &got).unwrap();
        return vec![];
    }
    let want = std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    let mut diffs = Vec::new();
    if path.extension().and_then(|e| e.to_str()) == Some("csv") {
        compare_csv(&want, &got, &mut diffs);
    } else {
        let w: Value = serde_json::from_str(&want).unwrap();
        let g: Value = serde_json::from_str(&got)
            .unwrap_or_else(|e| panic!("{}: output is not JSON: {e}", case.name));
        compare_json("", &w, &g, &mut diffs);
    }
    diffs
        .into_iter()
        .map(|d| format!("{}: {d}", case.name))
        .collect()
}

#[test]
fn outputs_agree_with_the_recorded_ones() {
    let cases = cases();
    assert!(cases.len() >= 20, "the case list was cut short");
    let diffs: Vec<String> = cases.par_iter().flat_map(check_case).collect();
    assert!(
        diffs.is_empty(),
        "{} differences:\n{}",
        diffs.len(),
        diffs
            .iter()
            .take(60)
            .cloned()
            .collect::<Vec<_>>()
            .join("\n")
    );
}

#[test]
fn the_comparison_can_fail() {
    // A changed number, a changed string and a missing key are each caught.
    let want: Value = serde_json::json!({"tc": 1.0, "state": "uniform", "q": [0.5]});
    for got in [
        serde_json::json!({"tc": 1.0 + 1e-8, "state": "uniform", "q": [0.5]}),
        serde_json::json!({"tc": 1.0, "state": "normal", "q": [0.5]}),
        serde_json::json!({"tc": 1.0, "q": [0.5]}),
        serde_json::json!({"tc": 1.0, "state": "uniform", "q": [0.5, 0.0]}),
    ] {
        let mut diffs = Vec::new();
        compare_json("", &want, &got, &mut diffs);
        assert!(!diffs.is_empty(), "{got} passed");
    }
    let mut diffs = Vec::new();
    compare_csv("a,b\n1,2\n", "a,b\n1,2.0000001\n", &mut diffs);
    assert_eq!(diffs.len(), 1);
    assert!(Path::new(&root().join("tests/golden/cases.txt")).exists());
}
