//! The `molefeed` binary: with no arguments it opens the app; with a subcommand it is the CLI.
fn main() {
    let args: Vec<String> = std::env::args().skip(1).collect();
    std::process::exit(molefeed::cli::main(&args));
}
