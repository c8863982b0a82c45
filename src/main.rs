//! The `tellscope` binary: parses the command line, dispatches to one
//! command under `cli/`, prints errors as one sentence and exits with the
//! contract's code.

mod cli;

use clap::Parser;

fn main() {
    // Rust ignores SIGPIPE, so printing into a closed pipe (`| head`) would
    // panic; restore the default so the process just ends, as tools do.
    #[cfg(unix)]
    unsafe {
        libc::signal(libc::SIGPIPE, libc::SIG_DFL);
    }
    let args = cli::Cli::parse();
    if let Err(e) = cli::run(args) {
        eprintln!("tellscope: {e}");
        std::process::exit(e.exit_code());
    }
}
