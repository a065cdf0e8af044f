//! The design report in words: the summary paragraph of a design, or its refusal in a few
//! lines (the three kinds, causes grouped, the terms named, a remedy that can help), and the
//! choice and step-order lines. Only fields that change are called cycled.

use crate::design::choice::ChoiceRule;
use crate::design::lattice_stage::ClassLayout;
use crate::design::step_order::StepOrder;
use crate::design::yardsticks::CogwheelScan;
use crate::design::{DesignKind, DesignReport, Impossibility, LimitRemedy, Refusal};
use crate::selection::RejectionSource;

/// `1 step`, `27 steps`.
pub fn steps_text(n: u64) -> String {
    if n == 1 {
        "1 step".into()
    } else {
        format!("{n} steps")
    }
}

/// The summary: a paragraph for a design, a few lines for a refusal.
pub fn summary(r: &DesignReport) -> String {
    match &r.refusal {
        Some(refusal) => refusal_text(r, refusal),
        None if r.steps.is_some() => design_text(r),
        None => "No design was found.".into(),
    }
}

/// The rule that picked the design.
pub fn choice_text(c: &ChoiceRule) -> String {
    match c {
        ChoiceRule::Only => "the search found one design of this length".into(),
        ChoiceRule::FewestPhases { candidates, max_phases, sum_phases } => format!(
            "among {candidates} equal-length lattice designs, the one with the fewest distinct phases per field ({max_phases} at most, {sum_phases} in all)"
        ),
        ChoiceRule::Calibration { candidates, leak } => format!(
            "among {candidates} equal-length lattice designs with equally few phases, the one with the lowest leakage under a 1 % phase-calibration error (|F| <= {leak:.2e})"
        ),
        ChoiceRule::Tie { candidates } => format!(
            "{candidates} equal-length lattice designs tie on every rule; the first in the search's canonical order"
        ),
        ChoiceRule::WeightedShorter => "a weighted step set shorter than every lattice design wins on length (its weights are not unit-modulus)".into(),
        ChoiceRule::WeightedOnly => "no lattice design exists within the limits; the shortest weighted step set on the grid, the most noise-efficient of its length".into(),
    }
}

/// How the steps were ordered.
pub fn step_order_text(s: Option<&StepOrder>) -> String {
    match s {
        None => "as found by the weighted search".into(),
        Some(s) if s.reordered => format!(
            "reordered by pairwise-swap descent so that slow linear drift leaks the backgrounds (reference alone and scatter pairs) least: first moment {:.3} -> {:.3} (units of drift per step x background)",
            s.moment_natural, s.moment_ordered
        ),
        Some(s) => format!(
            "natural lattice order (first moment on the backgrounds {:.3}; no swap lowered it)",
            s.moment_natural
        ),
    }
}

fn list<T: ToString>(v: &[T], sep: &str) -> String {
    v.iter().map(T::to_string).collect::<Vec<_>>().join(sep)
}

fn kind_text(r: &DesignReport) -> String {
    match &r.kind {
        Some(DesignKind::Nested { steps_per_field }) => {
            format!("a nested cycle ({})", list(steps_per_field, " x "))
        }
        Some(DesignKind::Cogwheel { n, winding }) => {
            format!("a cogwheel cycle Cog{n}({})", list(winding, ","))
        }
        Some(DesignKind::Lattice { .. }) => {
            "a lattice cycle that is neither nested nor cogwheel".into()
        }
        Some(DesignKind::Weighted { .. }) => match r.lattice_steps {
            Some(l) => format!(
                "a weighted non-lattice step set (shorter than the {l}-step lattice optimum; noise efficiency {:.3})",
                r.noise_efficiency
            ),
            None => format!(
                "a weighted non-lattice step set (no lattice design exists within the limits; noise efficiency {:.3})",
                r.noise_efficiency
            ),
        },
        None => String::new(),
    }
}

/// The fields whose phase changes in the cycle (a field held at one phase is not "cycled").
fn changing_fields(r: &DesignReport) -> Vec<String> {
    let Some(c) = &r.cycle else {
        return r.cycled_fields.clone();
    };
    (0..c.fields.len())
        .filter(|&j| c.steps.iter().any(|s| s[j] != c.steps[0][j]))
        .map(|j| c.fields[j].clone())
        .collect()
}

fn source_word(s: RejectionSource) -> &'static str {
    match s {
        RejectionSource::Agnostic => "agnostic",
        RejectionSource::FromPathways => "enumerated",
    }
}

fn yardstick_text(r: &DesignReport, n: u64) -> String {
    let nested = match r.nested_steps {
        Some(m) if m > n => format!(" The smallest nested cycle a lab would use by default needs {m} steps: this design takes {:.0} % of its acquisition time.", 100.0 * n as f64 / m as f64),
        Some(m) => format!(" The smallest nested cycle also needs {m} steps."),
        None => String::new(),
    };
    let cyclic_design = matches!(r.kind, Some(DesignKind::Cogwheel { .. }));
    let cog = match &r.cogwheel {
        Some(CogwheelScan { optimum_is_cyclic: true, .. }) if cyclic_design => String::new(),
        Some(CogwheelScan { best: Some((m, nu)), optimum_is_cyclic: true, .. }) => format!(" An equally short lattice design is cyclic: the cogwheel cycle Cog{m}({}).", list(nu, ",")),
        Some(CogwheelScan { best: Some((m, nu)), .. }) => format!(" The smallest cogwheel cycle has {m} steps (winding numbers {}).", list(nu, ",")),
        Some(c) if c.cancelled => format!(" No cogwheel cycle with fewer than {} steps exists; the scan was interrupted there.", c.excluded_below),
        Some(c) if c.budget_exhausted => format!(" No cogwheel cycle with fewer than {} steps exists; the scan stopped on its budget there.", c.excluded_below),
        Some(c) => format!(" No cogwheel cycle with at most {} exists.", steps_text(c.excluded_below.saturating_sub(1))),
        None => String::new(),
    };
    nested + &cog
}

fn leak_text(r: &DesignReport) -> String {
    let set = source_word(r.rejection);
    match r.first_leak_order {
        Some(k) if r.detection_nmr => format!(" The written cycle first leaks at coherence level |p| = {k} (checked)."),
        Some(k) => format!(" The written cycle first leaks at order {k} ({set} set, checked)."),
        None if r.detection_nmr => format!(" The written cycle stays clean through coherence level {} (checked).", r.first_leak_searched_to),
        None => format!(" The written cycle stays clean through order {} ({set} set, checked, the highest order searched).", r.first_leak_searched_to),
    }
}

fn proof_text(r: &DesignReport) -> String {
    if let (Some(DesignKind::Weighted { steps }), Some(b)) = (&r.kind, &r.beyond) {
        let lattice = match r.lattice_steps {
            Some(l) => format!(
                "every lattice design needs at least {l} steps (proven by the lattice search)"
            ),
            None => "no lattice design exists within the limits (every one tested)".into(),
        };
        format!(
            " Minimality: {lattice}, and every weighted step set with fewer than {steps} steps on the grid {:?} fails (exhaustive search, exact).",
            b.grid
        )
    } else if let (true, Some(b)) = (
        r.proven_minimal,
        r.beyond.as_ref().filter(|b| b.minimal_on_grid),
    ) {
        format!(" Minimality is proven over all step sets on the grid {:?} with any weights: every lattice design with fewer steps fails (lattice search) and so does every weighted step set with fewer steps on that grid (exhaustive search, exact).", b.grid)
    } else if r.proven_minimal {
        let layouts = if r.kept.iter().any(|(_, k)| k.len() > 1) {
            " with the kept signatures in one class or each in its own"
        } else {
            ""
        };
        format!(" Minimality is proven among lattice designs{layouts} (nested and cogwheel cycles included): every one with fewer steps was ruled out (tested, or the image of a tested one under a symmetry of the problem); weighted non-lattice step sets are a separate class, searched only as far as the note below says.")
    } else {
        format!(
            " The search was interrupted: this design is NOT proven minimal; {}.",
            excluded_text(r.excluded_below)
        )
    }
}

/// What an interrupted search proved: the lengths it excluded, or that it excluded none.
pub fn excluded_text(below: u64) -> String {
    if below <= 1 {
        "no length was excluded yet".into()
    } else {
        format!("no lattice design has fewer than {below} steps")
    }
}

fn design_text(r: &DesignReport) -> String {
    let n = r.steps.unwrap_or(0);
    let kept = r
        .kept
        .iter()
        .map(|(n, ts)| format!("{n} {}", list(ts, " + ")))
        .collect::<Vec<_>>()
        .join(", ");
    let layout = match r.layout {
        Some(ClassLayout::Separate) => format!(
            " Each kept signature sits in its own lattice class, weights summed over the kept characters (noise efficiency {:.3}).",
            r.noise_efficiency
        ),
        _ => String::new(),
    };
    let beyond = r
        .beyond
        .as_ref()
        .map_or(String::new(), |b| format!(" Beyond lattices: {}.", b.note));
    let cancelled = match &r.verified {
        Some(v) => format!(
            "all {} rejected terms",
            v.rejected_checked.iter().max().unwrap_or(&0)
        ),
        None => format!("all {} rejected terms", r.rejected_terms),
    };
    format!(
        "{}: {} changing {} that keeps {kept} and cancels {cancelled} ({} set) through order {} (exact).{layout}{}{}{}{beyond}",
        steps_text(n),
        kind_text(r),
        changing_fields(r).join(", "),
        source_word(r.rejection),
        r.order,
        yardstick_text(r, n),
        leak_text(r),
        proof_text(r),
    )
}

fn refusal_text(r: &DesignReport, refusal: &Refusal) -> String {
    let head = match refusal {
        Refusal::NoPhaseCycleAtAll => {
            "No phase cycle at all can do this (identical signatures on the cycled fields):"
                .to_string()
        }
        Refusal::NoCycleOnThisGrid => {
            "No phase cycle on this grid can do this (terms equal modulo the grid):".to_string()
        }
        Refusal::NoLatticeDesign { remedy } => {
            let classes = if r.kept.iter().any(|(_, k)| k.len() > 1) {
                " (kept signatures in one class and each in its own both tried)"
            } else {
                ""
            };
            let why = match (r.cancelled, r.excluded_below) {
                (true, below) => {
                    format!("the search was interrupted; {}", excluded_text(below))
                }
                (false, _) => "every one was ruled out".into(),
            };
            let wider = match &r.beyond {
                Some(b) => format!("\n  Weighted step sets (the wider class): {}.", b.note),
                None if r.cancelled => String::new(),
                None if r.grid.contains(&0) => "\n  Weighted step sets (the wider class) were not searched: that search needs a phase grid (--grid) or a phase cap (--max-phases) on every cycled field.".into(),
                None => "\n  Weighted step sets (the wider class) were not searched (--weighted-work 0).".into(),
            };
            return format!(
                "No lattice design within the limits{classes}: {why}. Remedy: {}.{wider}",
                remedy_text(remedy)
            );
        }
    };
    let mut lines = vec![head];
    lines.extend(
        r.impossible
            .iter()
            .map(|i| format!("  - {}", cause_text(i))),
    );
    lines.join("\n")
}

fn remedy_text(m: &LimitRemedy) -> String {
    match m {
        LimitRemedy::MaxSteps {
            current,
            known_valid: Some(k),
        } => format!(
            "raise --max-steps above {current} (a valid nested cycle of {k} steps exists: --max-steps {k} gives a design at once)"
        ),
        LimitRemedy::MaxSteps { current, .. } => format!("raise --max-steps above {current}"),
        LimitRemedy::MaxPhases { current, bound } => format!("raise --max-phases above {current} (with {current} phases per field no lattice design has more than {bound} steps, and all were tested; more steps cannot help)"),
        LimitRemedy::Either { max_steps, max_phases } => format!("raise --max-steps above {max_steps} or --max-phases above {max_phases}"),
    }
}

/// One cause in one line.
pub fn cause_text(i: &Impossibility) -> String {
    match i {
        Impossibility::Contaminated { output, kept, explanation, .. } => {
            format!("output `{output}` keeps {kept}, but {explanation}")
        }
        Impossibility::FixedFields { output, kept, rejected, fields } if fields.is_empty() => format!(
            "output `{output}`: {} equal the kept {kept} on every field (a rejected term, or one another output keeps): no phase cycle at all separates them",
            list(rejected, ", ")
        ),
        Impossibility::FixedFields { output, kept, rejected, fields } => format!(
            "output `{output}`: {} differ from the kept {kept} only on the fixed field(s) {}; remedy: cycle {} (phase = \"cycled\")",
            list(rejected, ", "),
            fields.join(", "),
            fields.join(" or ")
        ),
        Impossibility::Aliased { output, rejected, finer_grid } => format!(
            "output `{output}`: the rejected term {rejected:?} (cycled fields) equals a kept one modulo the phase grid; remedy: `--grid {}` (steps per turn, one per field), on which nothing aliases",
            list(finer_grid, ",")
        ),
        Impossibility::Identical { output, rejected } => format!(
            "output `{output}`: the rejected term {rejected:?} equals a kept term on the cycled fields"
        ),
    }
}
