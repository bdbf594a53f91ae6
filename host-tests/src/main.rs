//! The `deltakin` command: see `deltakin --help`.

fn main() -> std::process::ExitCode {
    deltakin_harness::cli::main()
}
