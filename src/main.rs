//! The `nestor` command line: parses options, dispatches to the library, maps outcomes to exit
//! codes (0 success, 1 a computation failed or some sweep points failed, 2 bad input).

mod cli;

use clap::Parser;
use std::process::ExitCode;

fn main() -> ExitCode {
    restore_default_sigpipe();
    let args = cli::Cli::parse();
    match cli::run(args) {
        Ok(cli::Outcome::Done) => ExitCode::SUCCESS,
        Ok(cli::Outcome::PartlyFailed(msg)) => {
            eprintln!("nestor: {msg}");
            ExitCode::from(1)
        }
        Err(cli::Failure::Input(msg)) => {
            eprintln!("nestor: error: {msg}");
            ExitCode::from(2)
        }
        Err(cli::Failure::Computation(msg)) => {
            eprintln!("nestor: computation failed: {msg}");
            ExitCode::from(1)
        }
    }
}

/// Ends the process quietly when the reader of standard output goes away (`nestor ... | head`),
/// as Unix command-line tools do: the Rust runtime ignores SIGPIPE, which would turn the closed
/// pipe into a panic at the next `println!`.
fn restore_default_sigpipe() {
    #[cfg(unix)]
    // SAFETY: called once at start-up, before any other thread exists; SIG_DFL is a valid
    // disposition for SIGPIPE.
    unsafe {
        libc::signal(libc::SIGPIPE, libc::SIG_DFL);
    }
}
