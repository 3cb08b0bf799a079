//! The `lenz` command-line tool.

fn main() -> std::process::ExitCode {
    lenz_harness::cli::main()
}
