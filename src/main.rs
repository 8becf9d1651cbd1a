//! The `stillpoint` binary: parse the command line, run the library's
//! command, turn an error into a message on stderr and a non-zero exit.

use std::process::ExitCode;

use clap::Parser;
use stillpoint::cli::{run, Cli, Outcome};

fn main() -> ExitCode {
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
