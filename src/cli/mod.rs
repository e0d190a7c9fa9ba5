//! The command-line interface: the machine interface used by tests, scripts and support staff.
//!
//! Every subcommand prints human text, or exactly one JSON object with `--json`. Failures exit
//! non-zero with one line on stderr (and, with `--json`, `{"error": {"kind", "message"}}` on
//! stdout) so scripts never have to parse prose.

/// Runs the CLI on `args` (without the program name) and returns the process exit code.
pub fn main(args: &[String]) -> i32 {
    let _ = args;
    0
}
