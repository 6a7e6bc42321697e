use std::process::ExitCode;

fn main() -> ExitCode {
    fillwright::cli::main()
}
