//! The `tauwise` command: parse arguments, call the library, render results.
//! Exit codes: 0 success (a failed verdict is a result, not an error),
//! 1 error in input or computation, 2 bad command line, 3 a verdict failed and
//! `--fail-on-violation` was given.

mod cli;

fn main() {
    std::process::exit(cli::main());
}
