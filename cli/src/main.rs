//! The `plethwire` command; the arguments and dispatch live in this
//! crate's library, the engines in the `plethwire` library.

fn main() -> std::process::ExitCode {
    plethwire_cli::main()
}
