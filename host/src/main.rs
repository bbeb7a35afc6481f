//! The `plethwire` command; everything lives in the library's `cli` module.

fn main() -> std::process::ExitCode {
    plethwire::cli::main()
}
