//! The `markwell` binary: a thin shell over the library's command-line front end.

fn main() -> std::process::ExitCode {
    markwell::cli::main()
}
