//! Verdicts at a table's written precision: published cycles written as labs write them
//! (3, 4, 6 and 15 decimals; degrees, radians and turns; weights written out likewise) check
//! clean, and one corrupted cell makes them leak. Sources: the nested 1x3x3x3 = 27-step cycle
//! for population-detected 2D (Tan, J. Chem. Phys. 129, 124501 (2008) (memory)) and the
//! cogwheel cycle Cog23(-3,0,1,11) for split-t1 +3Q MQMAS (Goldbourt & Madhu, Annu. Rep. NMR
//! Spectrosc. 54, 81 (2005) (memory); Levitt, Madhu & Hughes, J. Magn. Reson. 155, 300 (2002)).

mod common;

use common::scheme;
use pathsieve::check::{check_cycle, CheckReport, CheckRequest, VerdictClass};
use pathsieve::cycle::{read_cycle, read_cycle_csv, Cycle};
use pathsieve::experiment_file::read_experiment;
use std::path::Path;

#[derive(Clone, Copy, Debug)]
enum Unit {
    Degrees,
    Radians,
    Turns,
}

impl Unit {
    fn name(self) -> &'static str {
        match self {
            Unit::Degrees => "degrees",
            Unit::Radians => "radians",
            Unit::Turns => "turns",
        }
    }
    fn per_turn(self) -> f64 {
        match self {
            Unit::Degrees => 360.0,
            Unit::Radians => std::f64::consts::TAU,
            Unit::Turns => 1.0,
        }
    }
}

/// Bundled cycle and experiment, with the cycle's derived weights made explicit.
fn published(cycle: &str, experiment: &str) -> (Cycle, pathsieve::model::Experiment) {
    let exp = read_experiment(&scheme(experiment)).unwrap();
    let c = read_cycle(&scheme(cycle), None).unwrap();
    (c, exp)
}

/// The directive and header lines of a table of `c` in `unit`.
fn header(c: &Cycle, unit: &str) -> String {
    let mut s = format!("# unit = {unit}\nstep");
    for f in &c.fields {
        s.push_str(&format!(",{f}"));
    }
    for o in &c.outputs {
        s.push_str(&format!(",w:{}", o.name));
    }
    s.push('\n');
    s
}

/// The cycle as a CSV table with `d` decimals in `unit`, weights (times `scale`) with `d`
/// decimals as `re+imi`; `corrupt` adds `shift` turns to one (step, field) cell.
fn as_table(
    c: &Cycle,
    unit: Unit,
    d: usize,
    scale: f64,
    corrupt: Option<(usize, usize, f64)>,
) -> String {
    let mut s = header(c, unit.name());
    for (m, row) in c.steps.iter().enumerate() {
        s.push_str(&(m + 1).to_string());
        for (j, p) in row.iter().enumerate() {
            let mut x = p.turns_f64();
            if let Some((cm, cj, shift)) = corrupt {
                if cm == m && cj == j {
                    x += shift;
                }
            }
            s.push_str(&format!(",{:.*}", d, x * unit.per_turn()));
        }
        for o in &c.outputs {
            let w = o.weights[m].to_complex() * scale;
            s.push_str(&format!(
                ",{:.*}{}{:.*}i",
                d,
                w.re,
                if w.im < 0.0 { "-" } else { "+" },
                d,
                w.im.abs()
            ));
        }
        s.push('\n');
    }
    s
}

/// `x` as numpy's `%.18e` writes it: 18 decimals, exponent with a sign and at least two digits.
fn numpy_e(x: f64) -> String {
    let s = format!("{x:.18e}");
    let (m, e) = s.split_once('e').unwrap();
    let e: i32 = e.parse().unwrap();
    format!("{m}e{}{:02}", if e < 0 { '-' } else { '+' }, e.abs())
}

fn check_text(text: &str, exp: &pathsieve::model::Experiment) -> CheckReport {
    let c = read_cycle_csv(text, Path::new("lab.csv"), None).unwrap();
    check_cycle(exp, &c, &CheckRequest::default()).unwrap()
}

const CASES: [(&str, &str); 2] = [
    (
        "dye-fluorescence-27step.cycle.toml",
        "dye-fluorescence-2d.toml",
    ),
    ("nmr-cog23.cycle.toml", "nmr-spin32-mqmas.toml"),
];

#[test]
fn published_cycles_rounded_to_3_4_6_15_decimals_check_clean() {
    for (cycle, experiment) in CASES {
        let (c, exp) = published(cycle, experiment);
        for unit in [Unit::Degrees, Unit::Radians, Unit::Turns] {
            for d in [3, 4, 6, 15] {
                let r = check_text(&as_table(&c, unit, d, 1.0, None), &exp);
                assert!(
                    r.clean,
                    "{cycle} {unit:?} {d} decimals: {:#?}",
                    r.outputs[0]
                );
                // Phases snap at every precision here; weights of 3 decimals may not, in which
                // case the verdict is the weaker 'within the table's precision'.
                if d >= 6 {
                    assert!(r.exact, "{cycle} {unit:?} {d}: {:?}", r.outputs[0].class);
                    assert_ne!(r.outputs[0].class, VerdictClass::Exact);
                }
            }
        }
    }
}

#[test]
fn one_corrupted_cell_leaks_at_every_precision() {
    for (cycle, experiment) in CASES {
        let (c, exp) = published(cycle, experiment);
        let field = c.fields.len() - 1;
        for unit in [Unit::Degrees, Unit::Radians, Unit::Turns] {
            for d in [3, 4, 6, 15] {
                // A quarter turn off in one cell (e.g. 210 deg typed for 120 deg is 1/4 turn).
                let text = as_table(&c, unit, d, 1.0, Some((10, field, 0.25)));
                let r = check_text(&text, &exp);
                assert!(!r.clean, "{cycle} {unit:?} {d}");
                for o in r.outputs.iter().filter(|o| o.leak_count > 0) {
                    assert!(
                        o.suspect_steps.contains(&11),
                        "{cycle} {unit:?} {d} {}: {:?}",
                        o.name,
                        o.suspects
                    );
                }
            }
        }
    }
}

// The case: the 27-step weights not divided by N, written to 6 decimals as a
// spreadsheet writes them (-0.500000+0.866025i), are the exact cube roots of unity.
#[test]
fn six_decimal_unscaled_weights_snap_to_roots_of_unity_and_check_exactly() {
    let (c, exp) = published(CASES[0].0, CASES[0].1);
    let text = as_table(&c, Unit::Degrees, 6, 27.0, None);
    assert!(text.contains("-0.500000+0.866025i") || text.contains("-0.500000-0.866025i"));
    let r = check_text(&text, &exp);
    assert!(r.clean && r.exact, "{:?}", r.notes);
    assert!(r
        .outputs
        .iter()
        .all(|o| o.class == VerdictClass::ExactAfterSnapping));
    assert!(r.snaps.iter().any(|s| s.column.starts_with("w:")));
}

// numpy's savetxt default format is '%.18e' (numpy documentation, numpy.savetxt): full-precision
// doubles in scientific notation, including tiny imaginary parts such as -9.07e-18.
#[test]
fn scientific_notation_as_numpy_savetxt_writes_it_is_read_and_clean() {
    let (c, exp) = published(CASES[0].0, CASES[0].1);
    let mut s = header(&c, "radians");
    for (m, row) in c.steps.iter().enumerate() {
        s.push_str(&(m + 1).to_string());
        for p in row {
            s.push_str(&format!(
                ",{}",
                numpy_e(p.turns_f64() * std::f64::consts::TAU)
            ));
        }
        for o in &c.outputs {
            let w = o.weights[m].to_complex();
            // Add float noise to the imaginary part the way a computed weight carries it.
            let im = numpy_e(w.im - 9.07e-18);
            let sign = if im.starts_with('-') { "" } else { "+" };
            s.push_str(&format!(",{}{sign}{im}i", numpy_e(w.re)));
        }
        s.push('\n');
    }
    assert!(s.contains("e-02") && s.contains("e+00"), "{s}");
    let r = check_text(&s, &exp);
    assert!(r.clean && r.exact, "{:?}", r.notes);
}

/// The same table in a spreadsheet dialect: `sep` between cells, decimal commas when asked,
/// CRLF and a byte-order mark when asked, units in the headers.
fn dialect_table(c: &Cycle, sep: &str, comma: bool, excel: bool) -> String {
    let num = |x: f64| {
        let t = format!("{x:.6}");
        if comma {
            t.replace('.', ",")
        } else {
            t
        }
    };
    let eol = if excel { "\r\n" } else { "\n" };
    let mut s = String::from(if excel { "\u{feff}" } else { "" });
    let mut head = vec!["step".to_string()];
    head.extend(c.fields.iter().map(|f| format!("{f} (deg)")));
    head.extend(c.outputs.iter().map(|o| format!("w:{}", o.name)));
    head.push(String::new()); // an empty trailing column, as spreadsheets write
    s.push_str(&head.join(sep));
    s.push_str(eol);
    for (m, row) in c.steps.iter().enumerate() {
        let mut cells = vec![(m + 1).to_string()];
        cells.extend(row.iter().map(|p| num(p.turns_f64() * 360.0)));
        for o in &c.outputs {
            let w = o.weights[m].to_complex() * 27.0;
            let sign = if w.im < 0.0 { "-" } else { "+" };
            cells.push(format!("\"{}{sign}{}i\"", num(w.re), num(w.im.abs())));
        }
        cells.push(String::new());
        s.push_str(&cells.join(sep));
        s.push_str(eol);
    }
    s.push_str(&format!("{sep}{sep}{eol}")); // an empty trailing row
    s
}

// Excel "CSV UTF-8" (byte-order mark, CRLF), a European locale (semicolons, decimal commas)
// and LabVIEW's spreadsheet strings (tabs) all give the exact table's verdict (common practice
// for how these programs write tables).
#[test]
fn spreadsheet_dialects_give_the_exact_tables_verdict_and_are_named() {
    let (c, exp) = published(CASES[0].0, CASES[0].1);
    let exact = check_cycle(&exp, &c, &CheckRequest::default()).unwrap();
    for (sep, comma, excel, name) in [
        (",", false, true, "UTF-8 byte-order mark"),
        (";", true, false, "semicolon-separated, decimal commas"),
        ("\t", false, false, "tab-separated"),
    ] {
        let text = dialect_table(&c, sep, comma, excel);
        let r = check_text(&text, &exp);
        assert_eq!(r.clean, exact.clean, "{name}");
        assert!(r.exact, "{name}");
        assert!(
            r.notes.iter().any(|n| n.contains(name)),
            "{name}: {:?}",
            r.notes
        );
    }
}

#[test]
fn degrees_in_a_turns_file_are_flagged_with_the_unit_to_use() {
    let (c, exp) = published(CASES[0].0, CASES[0].1);
    let text = as_table(&c, Unit::Degrees, 0, 1.0, None).replace("unit = degrees", "unit = turns");
    let r = check_text(&text, &exp);
    assert!(
        r.notes
            .iter()
            .any(|n| n.contains("WARNING") && n.contains("is the unit degrees")),
        "{:?}",
        r.notes
    );
}

// The typo: 120 deg entered as 210 deg in one row of the 27-step nested cycle (Tan
// 2008 (memory)) written in degrees: the checker names the step and proposes 120 deg.
#[test]
fn a_typo_in_one_cell_is_named_with_its_correction() {
    let (c, exp) = published(CASES[0].0, CASES[0].1);
    // Step 11 is (1/3, 0, 1/3) turn; field "4" (third column) 120 deg -> 210 deg.
    let text = as_table(&c, Unit::Degrees, 6, 1.0, None);
    let mut lines: Vec<String> = text.lines().map(str::to_string).collect();
    let row = lines.iter().position(|l| l.starts_with("11,")).unwrap();
    let mut cells: Vec<String> = lines[row].split(',').map(str::to_string).collect();
    assert_eq!(cells[3], "120.000000");
    cells[3] = "210.000000".into();
    lines[row] = cells.join(",");
    let r = check_text(&(lines.join("\n") + "\n"), &exp);
    assert!(!r.clean);
    for o in r.outputs.iter().filter(|o| !o.clean) {
        assert!(
            o.suspect_steps.contains(&11),
            "{}: {:?}",
            o.name,
            o.suspects
        );
        assert!(
            o.suspects
                .iter()
                .any(|s| s.correction.contains("-> 1/3 turn (120 deg)")),
            "{:?}",
            o.suspects
        );
    }
}

// A step of Cog23 duplicated in place of another, and a step left out (Goldbourt & Madhu 2005
// (memory)): the duplicate pair, or the missing step, is named.
#[test]
fn duplicated_and_missing_cogwheel_steps_are_named() {
    let (mut c, exp) = published(CASES[1].0, CASES[1].1);
    let mut dup = c.clone();
    dup.steps[14] = dup.steps[4].clone();
    dup.outputs.clear(); // weights derived from the experiment's signal
    let r = check_cycle(&exp, &dup, &CheckRequest::default()).unwrap();
    assert!(!r.clean);
    let o = &r.outputs[0];
    assert!(o.suspect_steps.contains(&15), "{:?}", o.suspects);
    assert!(
        o.suspects.iter().any(|s| s.kind == "duplicate step"),
        "{:?}",
        o.suspects
    );
    c.steps.remove(13);
    c.outputs.clear();
    let r = check_cycle(&exp, &c, &CheckRequest::default()).unwrap();
    assert!(!r.clean);
    assert!(
        r.outputs[0]
            .suspects
            .iter()
            .any(|s| s.kind == "missing step"),
        "{:?}",
        r.outputs[0].suspects
    );
}

mod random_lattice_cycles {
    use super::*;
    use pathsieve::cycle::{weights_from_signature, CycleMeta, CycleOutput, Phase, WeightSource};
    use pathsieve::exact::Turns;
    use proptest::prelude::*;

    /// The nested cycle with `grid[j]` steps per turn on the three cycled fields of the dye
    /// experiment, explicit weights for each wanted signal.
    fn nested(grid: [i64; 3]) -> (Cycle, pathsieve::model::Experiment) {
        let (c27, exp) = published(CASES[0].0, CASES[0].1);
        let mut steps = Vec::new();
        for a in 0..grid[0] {
            for b in 0..grid[1] {
                for c in 0..grid[2] {
                    steps.push(vec![
                        Phase::Exact(Turns::new(a, grid[0])),
                        Phase::Exact(Turns::new(b, grid[1])),
                        Phase::Exact(Turns::new(c, grid[2])),
                    ]);
                }
            }
        }
        let outputs = c27
            .outputs
            .iter()
            .map(|o| {
                let WeightSource::FromSignature(t) = &o.source else {
                    unreachable!()
                };
                CycleOutput {
                    name: o.name.clone(),
                    weights: weights_from_signature(&steps, &t.0),
                    source: WeightSource::Explicit,
                }
            })
            .collect();
        let c = Cycle {
            fields: c27.fields.clone(),
            steps,
            outputs,
            meta: CycleMeta::default(),
        };
        (c, exp)
    }

    proptest! {
        #![proptest_config(ProptestConfig { cases: 10, ..ProptestConfig::default() })]

        // Nested grids of 3..=5 steps per field keep R, NR and 2Q clean through fourth order
        // (hand reasoning as for the 27-step cycle, Tan 2008 (memory)): written with d >= 3
        // decimals they check clean; one cell moved by far more than the precision leaks and
        // the suspects name its step.
        #[test]
        fn rounded_tables_are_clean_and_one_wrong_cell_is_named(
            g in prop::array::uniform3(3i64..=5),
            d in 3usize..=9,
            unit in 0usize..3,
            pick in any::<prop::sample::Index>(),
            field in 0usize..3,
            shift in 0.05f64..0.45,
        ) {
            let unit = [Unit::Degrees, Unit::Radians, Unit::Turns][unit];
            let (c, exp) = nested(g);
            let exact = check_cycle(&exp, &c, &CheckRequest::default()).unwrap();
            prop_assert!(exact.clean);
            // Weights written unscaled (times N), as labs often do (common practice).
            let n = c.len() as f64;
            let r = check_text(&as_table(&c, unit, d, n, None), &exp);
            prop_assert!(r.clean, "{:?} {d} {unit:?}", g);
            let m = pick.index(c.len());
            let r = check_text(&as_table(&c, unit, d, n, Some((m, field, shift))), &exp);
            prop_assert!(!r.clean);
            for o in r.outputs.iter().filter(|o| o.leak_count > 0) {
                prop_assert!(o.suspect_steps.contains(&(m + 1)), "{}: {:?}", o.name, o.suspects);
            }
        }
    }
}

// Round trip: the 27-step design exported as JSON (the file acquisition software loads) checks
// clean with `pathsieve check` itself (Tan 2008 (memory) for the cycle).
#[test]
fn check_reads_the_tools_own_json_export() {
    let d = std::env::temp_dir().join(format!("pathsieve-h8-json-{}", std::process::id()));
    std::fs::create_dir_all(&d).unwrap();
    let j = d.join("nested.json");
    let exp = scheme("dye-fluorescence-2d.toml");
    let cyc = scheme("dye-fluorescence-27step.cycle.toml");
    let s = |p: &std::path::Path| p.to_str().unwrap().to_string();
    let (code, _, err) = common::run_cli(&[
        "export",
        &s(&exp),
        &s(&cyc),
        "--format",
        "json",
        "--unit",
        "rad",
        "--out",
        &s(&j),
        "--force",
    ]);
    assert_eq!(code, 0, "{err}");
    let (code, out, err) = common::run_cli(&["check", &s(&exp), &s(&j)]);
    let _ = std::fs::remove_dir_all(&d);
    assert_eq!(code, 0, "{out}{err}");
    assert!(out.contains("clean through order"), "{out}");
}

// Integer-valued decimals are exact values (issue 8): the 27-step nested cycle (Tan 2008
// (memory)) written as `120.0` or `240.000` degrees, in CSV and as TOML floats, is checked
// exactly as written: class "exact", nothing snapped.
#[test]
fn integer_valued_decimal_degrees_are_exact_not_snapped() {
    let exp = read_experiment(&scheme("dye-fluorescence-2d.toml")).unwrap();
    let idx: Vec<[u32; 3]> = (0..27).map(|m| [m / 9, (m / 3) % 3, m % 3]).collect();
    for d in [1, 3] {
        let mut csv = "# unit = degrees\n2,3,4\n".to_string();
        for r in &idx {
            let cells: Vec<String> = r
                .iter()
                .map(|&k| format!("{:.*}", d, 120.0 * f64::from(k)))
                .collect();
            csv.push_str(&(cells.join(",") + "\n"));
        }
        assert!(csv.contains("120.0"));
        let r = check_text(&csv, &exp);
        assert!(r.clean && r.snaps.is_empty(), "{d}: {:?}", r.snaps);
        assert!(
            r.outputs.iter().all(|o| o.class == VerdictClass::Exact),
            "{d}"
        );
    }
    let rows: Vec<String> = idx
        .iter()
        .map(|r| {
            format!(
                "[{:.1}, {:.1}, {:.1}]",
                120.0 * f64::from(r[0]),
                120.0 * f64::from(r[1]),
                120.0 * f64::from(r[2])
            )
        })
        .collect();
    let toml = format!(
        "[cycle]\nunit = \"degrees\"\nfields = [\"2\", \"3\", \"4\"]\nsteps = [{}]\n",
        rows.join(", ")
    );
    let c = pathsieve::cycle::read_cycle_toml(&toml, Path::new("lab.toml"), None).unwrap();
    let r = check_cycle(&exp, &c, &CheckRequest::default()).unwrap();
    assert!(r.clean && r.snaps.is_empty(), "{:?}", r.snaps);
    assert!(r.outputs.iter().all(|o| o.class == VerdictClass::Exact));
}
