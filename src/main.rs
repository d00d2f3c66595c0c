//! The `clout` command: exact power reports, single votes and checks for
//! rule files written in the clout rule language.

mod cli;

fn main() -> std::process::ExitCode {
    cli::main()
}
