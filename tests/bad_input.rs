//! Regression tests for the bad-input and fault campaign (issue 12): every input the campaign
//! found gives exit code 2 or a correct verdict, in bounded time and memory, with no panic and
//! no damaged file.

mod common;

use std::time::{Duration, Instant};

/// Run the CLI and fail if it takes longer than `limit` (the run itself is not killed; the
/// bound is on what the user waits).
fn run_within(limit: Duration, args: &[&str]) -> (i32, String, String) {
    let start = Instant::now();
    let out = common::run_cli(args);
    let took = start.elapsed();
    assert!(took < limit, "{args:?} took {took:?} (limit {limit:?})");
    assert!(!out.2.contains("panicked"), "{args:?} panicked: {}", out.2);
    out
}

fn temp_dir() -> tempfile::TempDir {
    tempfile::tempdir().expect("a temporary directory")
}

/// The carbonyl 2x2 pump cycle with pu2 at `1/den` turn in the last step instead of `1/2`.
fn carbonyl_cycle(den: u64, weights: &str) -> String {
    format!(
        r#"[cycle]
unit = "turns"
experiment = "carbonyl-pump-probe.toml"
fields = ["pu1", "pu2"]
steps = [["0", "0"], ["0", "1/2"], ["1/2", "0"], ["1/2", "1/{den}"]]
[[output]]
name = "absorptive"
{weights}
"#
    )
}

// Exact evaluation with a common denominator of many distinct primes (30030 = 2*3*5*7*11*13)
// took 132 s; it must answer in well under the time a user waits, with the right values.
// Check values by hand: the (-2,+2,0) term sees 1 - 1 - 1 + exp(2 pi i * 2/30030), so
// |F| = |exp(4 pi i/30030) - 1| = 2 sin(2 pi/30030) (elementary trigonometry).
#[test]
fn a_phase_over_30030_checks_exactly_within_seconds() {
    let dir = temp_dir();
    let experiment = common::scheme("carbonyl-pump-probe.toml");
    for (name, weights) in [
        ("explicit", r#"weights = ["1", "-1", "-1", "1"]"#),
        (
            "root",
            r#"weights = ["1", "-1", "-1", "exp(2*pi*i/30030)"]"#,
        ),
        ("signature", "from_signature = [-1, 1]"),
    ] {
        let path = dir.path().join(format!("{name}.cycle.toml"));
        std::fs::write(&path, carbonyl_cycle(30030, weights)).unwrap();
        let (code, out, err) = run_within(
            Duration::from_secs(20),
            &[
                "check",
                experiment.to_str().unwrap(),
                path.to_str().unwrap(),
                "--json",
            ],
        );
        assert_eq!(code, 1, "{name}: {err}");
        let v: serde_json::Value = serde_json::from_str(&out).unwrap();
        let o = &v["outputs"][0];
        assert_eq!(o["exact"], true, "{name}");
        if name == "explicit" {
            let leak = o["leaks"]
                .as_array()
                .unwrap()
                .iter()
                .find(|l| l["signature"] == serde_json::json!([-2, 2, 0]))
                .expect("(-2,2,0) leaks");
            let want = 2.0 * (std::f64::consts::TAU / 30030.0).sin();
            let got = leak["value"]["abs"].as_f64().unwrap();
            assert!((got - want).abs() < 1e-12, "{got} vs {want}");
            assert_eq!(leak["value"]["exact"], "-1 + z30030^2");
        }
        for cmd in [
            vec!["export", "--format", "csv", "--out"],
            vec!["draw", "leakage", "--out"],
        ] {
            let target = dir.path().join(format!("{name}-{}.out", cmd[0]));
            let mut args = cmd.clone();
            args.push(target.to_str().unwrap());
            args.push(experiment.to_str().unwrap());
            args.push(path.to_str().unwrap());
            let (code, _, err) = run_within(Duration::from_secs(20), &args);
            assert_eq!(code, 0, "{name} {cmd:?}: {err}");
        }
    }
}
