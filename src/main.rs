//! The `holdfast` binary: a thin shell over the library. It runs the command
//! line and turns an error into a message on stderr and a documented exit code.

fn main() -> std::process::ExitCode {
    holdfast::cli::main()
}
