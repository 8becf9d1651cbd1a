//! The `stillpoint` binary: parse the command line, run the library's
//! command, turn an error into a message on stderr and a non-zero exit.

use std::process::ExitCode;

use clap::Parser;
use stillpoint::cli::{run, Cli, Outcome};

fn main() -> ExitCode {
    // A panic is a fault of the tool, not of the input: say so, and end with
    // the documented status 3 (not Rust's 101).
    let default_hook = std::panic::take_hook();
    std::panic::set_hook(Box::new(move |info| {
        default_hook(info);
        eprintln!("error: internal failure of stillpoint (not of the input); please report it");
        std::process::exit(3);
    }));
    let argv: Vec<String> = std::env::args().collect();
    let cli = Cli::parse();
    // A build stopped by Ctrl-C or SIGTERM removes its temporary file.
    if let Err(e) = stillpoint::output::partial::stop_on_signals() {
        eprintln!("error: cannot watch for stopping signals: {e}");
        return ExitCode::from(3);
    }
    match run(cli, &argv.join(" ")) {
        Ok(Outcome::Ok) => ExitCode::SUCCESS,
        Ok(Outcome::Failed) => ExitCode::from(1),
        Err(e) => {
            // Under MPI, rank 0 speaks for every rank.
            #[cfg(feature = "mpi")]
            if stillpoint::parallel::quiet() {
                return ExitCode::from(2);
            }
            eprintln!("error: {e}");
            ExitCode::from(2)
        }
    }
}
