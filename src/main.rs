//! The `tellscope` binary: parses the command line, dispatches to one
//! command under `cli/`, prints errors as one sentence and exits with the
//! contract's code.

mod cli;

use clap::Parser;

fn main() {
    let args = cli::Cli::parse();
    if let Err(e) = cli::run(args) {
        eprintln!("tellscope: {e}");
        std::process::exit(e.exit_code());
    }
}
