//! The `tauwise` command: parse arguments, call the library, render results.
//! Exit codes: 0 success (a verdict that exceeds is a result, not an error),
//! 1 error in input or computation, 2 bad command line, 3 a verdict exceeds
//! its limit and `--fail-on-violation` was given, 4 no verdict exceeds but
//! one could not be judged and `--fail-on-violation` was given.

mod cli;

fn main() {
    std::process::exit(cli::main());
}
