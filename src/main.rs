//! The `switchyard` command: parses the command line and hands each subcommand to `cmd`.

use std::process::ExitCode;

mod cmd;

fn main() -> ExitCode {
    cmd::main()
}
