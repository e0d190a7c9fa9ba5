//! Output that cannot be written is a failure: every command, `batch` and the log export
//! exit non-zero with one line on stderr when stdout is `/dev/full`. Also the entry points
//! that must answer a script in JSON: `help --json` and a command line with no command.

use crate::support::{remove, run_into_full_device, run_with_input, sample_log, scratch, text};
use serde_json::Value;
use std::process::Output;
use std::time::Duration;

/// Exit code 1, and exactly one line on stderr naming the failed write: no panic, no
/// backtrace, no silence.
fn assert_write_failure(what: &str, out: &Output) {
    let stderr = text(&out.stderr);
    assert_eq!(out.status.code(), Some(1), "{what}: {stderr}");
    assert_eq!(stderr.lines().count(), 1, "{what}: {stderr:?}");
    assert!(
        stderr.contains("cannot write the output") && stderr.contains("No space left"),
        "{what}: {stderr}"
    );
}

#[test]
fn every_kind_of_output_to_a_full_device_fails() {
    let dir = scratch("full-device");
    let log = sample_log(&dir, 300);
    let log = log.to_str().unwrap();
    let requests = b"{\"command\":\"mass\",\"args\":{\"positional\":[\"H2O\"]}}\n";
    let cases: [(&str, Vec<&str>, &[u8]); 8] = [
        ("human report", vec!["mass", "H2O"], b""),
        ("json report", vec!["mass", "H2O", "--json"], b""),
        ("help", vec!["help"], b""),
        ("help json", vec!["help", "--json"], b""),
        ("batch", vec!["batch"], requests),
        (
            "csv export",
            vec!["log", "export", "--file", log, "--format", "csv"],
            b"",
        ),
        (
            "jsonl export",
            vec!["log", "export", "--file", log, "--format", "jsonl"],
            b"",
        ),
        (
            "list json",
            vec!["log", "list", "--file", log, "--json"],
            b"",
        ),
    ];
    for (what, args, stdin) in cases {
        assert_write_failure(what, &run_into_full_device(&args, stdin));
    }
    remove(&dir);
}

#[test]
fn an_error_whose_json_cannot_be_written_still_exits_with_its_code() {
    // The error object goes to stdout with --json; a full stdout must not turn the usage
    // error into a crash.
    let out = run_into_full_device(&["mass", "--json"], b"");
    let stderr = text(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{stderr}");
    assert!(!stderr.contains("panicked"), "{stderr}");
}

fn json_of(out: &Output) -> Value {
    serde_json::from_slice(&out.stdout)
        .unwrap_or_else(|e| panic!("not JSON ({e}): {}", text(&out.stdout)))
}

#[test]
fn help_with_json_is_json() {
    let out = run_with_input(&["help", "--json"], b"", Duration::from_secs(30));
    assert!(out.status.success(), "{}", text(&out.stderr));
    let help = json_of(&out)["help"].as_str().unwrap().to_string();
    assert!(help.contains("molefeed COMMAND"), "{help}");
    assert!(help.contains("batch") || help.contains("log"), "{help}");
}

#[test]
fn a_command_line_without_a_command_answers_json_when_asked() {
    for args in [vec!["--json"], vec!["--json", "mass", "H2O"]] {
        let out = run_with_input(&args, b"", Duration::from_secs(30));
        assert_eq!(out.status.code(), Some(2), "{args:?}");
        let error = &json_of(&out)["error"];
        assert_eq!(error["kind"], "usage", "{args:?}");
        assert!(
            error["message"]
                .as_str()
                .unwrap()
                .contains("command comes first"),
            "{error}"
        );
    }
}

#[test]
fn an_error_message_is_one_line_whatever_the_input_held() {
    let out = run_with_input(
        &["frob\nmolefeed: forged\u{1b}[2J", "--json"],
        b"",
        Duration::from_secs(30),
    );
    assert_eq!(out.status.code(), Some(2));
    let stderr = text(&out.stderr);
    assert_eq!(stderr.lines().count(), 1, "{stderr:?}");
    assert!(!stderr.contains('\u{1b}'), "{stderr:?}");
    assert!(
        stderr.contains("frob\\nmolefeed: forged\\u{1b}[2J"),
        "{stderr:?}"
    );
    // The JSON error keeps the text exactly; JSON escapes it on its own.
    let error = &json_of(&out)["error"];
    assert!(
        error["message"]
            .as_str()
            .unwrap()
            .contains("frob\nmolefeed"),
        "{error}"
    );
}

/// Human output says its cautions in words, from the catalog the app translates
/// (`i18n/en/molefeed.ftl`); the JSON keeps the codes and adds the same sentence.
#[test]
fn cautions_print_as_sentences_and_json_keeps_the_codes() {
    let calc = [
        "calc",
        "ct",
        "--residual",
        "0.5",
        "--ph",
        "7.5",
        "--temperature",
        "15",
        "--temperature-unit",
        "celsius",
        "--t10",
        "20",
    ];
    let water = [
        "stability",
        "--ph",
        "8.1",
        "--temperature",
        "20",
        "--alkalinity",
        "120",
        "--calcium-as-caco3",
        "150",
    ];
    for args in [&calc[..], &water[..]] {
        let out = std::process::Command::new(env!("CARGO_BIN_EXE_molefeed"))
            .args(args)
            .output()
            .unwrap();
        let human = String::from_utf8_lossy(&out.stdout);
        assert!(out.status.success(), "{args:?}: {human}");
        // The English text of `advisory-note`, which the advisory code prints as.
        assert!(
            human.contains("[note] Advisory only: a licensed operator decides the feed"),
            "{human}"
        );
        assert!(!human.contains("advisory-operator-decides"), "{human}");
        assert!(!human.contains("{ $"), "{human}");
        let json_out = std::process::Command::new(env!("CARGO_BIN_EXE_molefeed"))
            .args(args)
            .arg("--json")
            .output()
            .unwrap();
        let json: serde_json::Value = serde_json::from_slice(&json_out.stdout).unwrap();
        let advisory = json["cautions"]
            .as_array()
            .unwrap()
            .iter()
            .find(|c| c["key"] == "advisory-operator-decides")
            .unwrap_or_else(|| panic!("{json}"));
        assert!(
            advisory["text"]
                .as_str()
                .unwrap()
                .starts_with("Advisory only")
        );
    }
    // CT 0.5 × 20 = 10 mg·min/L, below the 3-log requirement: its sentence, numbers filled in.
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_molefeed"))
        .args(calc)
        .output()
        .unwrap();
    let human = String::from_utf8_lossy(&out.stdout);
    assert!(
        human.contains("[warning] CT 10 mg·min/L is below the "),
        "{human}"
    );
}

/// Without a display, `molefeed` alone says in one line that the app needs one and where the
/// command-line calculators are, and fails; no windowing library's internals reach the
/// operator. (Built without the app, it says that, also in one line.)
#[test]
fn the_app_without_a_display_says_so_in_one_line() {
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_molefeed"))
        .env_remove("DISPLAY")
        .env_remove("WAYLAND_DISPLAY")
        .env_remove("WAYLAND_SOCKET")
        .output()
        .expect("binary runs");
    let err = String::from_utf8_lossy(&out.stderr);
    assert_ne!(out.status.code(), Some(0), "{err}");
    assert_eq!(err.trim().lines().count(), 1, "{err}");
    assert!(err.contains("'molefeed help'"), "{err}");
    assert!(!err.contains(".cargo/registry"), "{err}");
}
