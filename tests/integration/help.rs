//! The `--help` texts are part of the interface; their snapshots show every change.

use crate::support::command;

fn help(args: &[&str]) -> String {
    let out = command()
        .args(args)
        .env("COLUMNS", "100")
        .output()
        .expect("the candor binary runs");
    assert_eq!(out.status.code(), Some(0));
    String::from_utf8_lossy(&out.stdout).into_owned()
}

#[test]
fn top_level_help() {
    insta::assert_snapshot!("candor_help", help(&["--help"]));
}

#[test]
fn check_help() {
    insta::assert_snapshot!("candor_check_help", help(&["check", "--help"]));
}
