//! A reader that goes away (`nestor ... | head`) ends the command quietly, by SIGPIPE as Unix tools
//! do (common practice), instead of a panic at the next write to standard output.

#![cfg(unix)]

use std::os::unix::process::ExitStatusExt;
use std::process::{Command, Stdio};

#[test]
fn a_closed_standard_output_ends_the_command_without_a_panic() {
    let mut child = Command::new(env!("CARGO_BIN_EXE_nestor"))
        .args(["tc", "configs/reference/nested_parabolic.toml", "--json"])
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("start nestor");
    // Close the reading end before the command has computed anything to print.
    drop(child.stdout.take());
    let out = child.wait_with_output().expect("wait for nestor");
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(!stderr.contains("panicked"), "{stderr}");
    assert_eq!(
        out.status.signal(),
        Some(libc::SIGPIPE),
        "{:?}: {stderr}",
        out.status
    );
}
