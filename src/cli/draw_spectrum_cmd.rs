//! `pathsieve draw spectrum RUN`: the 2D map of one output of a `pathsieve simulate` run (its
//! `.npz`, or the `.npy` set named by its `--out`), read back with its metadata sidecar: the
//! ideal, as-measured and leak panels on one colour scale, a diverging map centred on zero for
//! signed absorptive data or a magnitude map, contours (negative dashed), the diagonal, a colour
//! bar; excitation w1 vertical, detection w3 horizontal, in the run's axis unit.

use super::simulate_files::Layout;
use anyhow::{bail, Context};
use clap::{Args, ValueEnum};
use pathsieve::export::npy::{read_npy, NpyArray, NpyData};
use pathsieve::export::npz::read_npz;
use pathsieve::render::spectrum_svg::{spectrum_svg, Component, Panel, SpectrumPicture};
use pathsieve::safe_write::{check_targets, write_many_atomic};
use pathsieve::simulate::{EnergyUnit, ExcitationAxis, Spectrum2D};
use std::path::{Path, PathBuf};

/// What is drawn.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum Shown {
    /// Real part for absorptive (R + NR) outputs, magnitude otherwise.
    Auto,
    /// Real part (signed, diverging colours centred on zero).
    Real,
    /// Magnitude (sequential colours).
    Magnitude,
}

/// Arguments of `pathsieve draw spectrum`.
#[derive(Args, Debug)]
#[command(
    after_help = "Example:\n  pathsieve simulate scheme.toml cycle.toml --out run.npz \\\n      --delay t1=0:4:800 --delay t3=0:4:800\n  pathsieve draw spectrum run.npz --output absorptive \\\n      --out absorptive.svg --png\n\n\
Excitation w1 (from t1) is the vertical axis, detection w3 (from the last delay) the horizontal \
one, both in the run's axis unit (its metadata: axis_unit). Every panel shares the colour scale \
of the first (the ideal spectrum); a panel beyond it says so in its caption.\n\n\
Exit codes:\n  0    written\n  2    usage or input error, or a limit exceeded (nothing written)\n  \
130  interrupted by Ctrl-C or SIGTERM (nothing written, temporaries removed)"
)]
pub struct SpectrumArgs {
    /// The `--out` of a `pathsieve simulate` run: RUN.npz, or RUN.npy for one file per array
    /// (its RUN.meta.json is read too).
    run: PathBuf,
    /// The output to draw (default: the first of the run).
    #[arg(long, value_name = "NAME")]
    output: Option<String>,
    /// Draw only the ideal spectrum (no as-measured or leak panels).
    #[arg(long)]
    ideal_only: bool,
    /// Component drawn.
    #[arg(long, value_enum, default_value_t = Shown::Auto)]
    component: Shown,
    /// Frequency window LO:HI on both axes, in the run's axis unit (default: the run's).
    #[arg(long, value_name = "LO:HI")]
    window: Option<String>,
    /// Title (default: the experiment's name, the output and the middle delays).
    #[arg(long, value_name = "TEXT")]
    title: Option<String>,
    /// Output SVG file.
    #[arg(long, value_name = "OUT.svg")]
    out: PathBuf,
    /// Also write the picture as PNG beside the SVG (OUT.png).
    #[arg(long)]
    png: bool,
    /// Pixels per SVG unit of the PNG.
    #[arg(long, value_name = "X", default_value_t = 2.0)]
    png_scale: f32,
    /// Overwrite existing files.
    #[arg(long)]
    force: bool,
}

/// The arrays of a run, by member name.
fn read_arrays(
    layout: &Layout,
    run: &Path,
    npz: bool,
    names: &[String],
) -> anyhow::Result<Vec<(String, NpyArray)>> {
    if npz {
        let bytes = pathsieve::input_text::read_bytes_limited(run, 1 << 32)?;
        return read_npz(&bytes).map_err(|m| anyhow::anyhow!("{}: {m}", run.display()));
    }
    let mut out = Vec::new();
    for n in names {
        let p = layout.array(n);
        if p.exists() {
            let bytes = pathsieve::input_text::read_bytes_limited(&p, 1 << 32)?;
            out.push((
                n.clone(),
                read_npy(&bytes).with_context(|| p.display().to_string())?,
            ));
        }
    }
    Ok(out)
}

fn floats(a: &NpyArray) -> Vec<f64> {
    match &a.data {
        NpyData::F64(v) => v.clone(),
        NpyData::C128(v) => v.iter().map(|z| z.re).collect(),
        NpyData::I64(v) => v.iter().map(|&x| x as f64).collect(),
    }
}

fn spectrum_of(
    arrays: &[(String, NpyArray)],
    member: &str,
    exc: &[f64],
    det: &[f64],
    mode: ExcitationAxis,
    unit: EnergyUnit,
) -> anyhow::Result<Option<Spectrum2D>> {
    let Some((_, a)) = arrays.iter().find(|m| m.0 == member) else {
        return Ok(None);
    };
    if a.shape != [exc.len(), det.len()] {
        bail!("array `{member}` has shape {:?}, not [{}, {}] (excitation x detection); the run's files do not belong together", a.shape, exc.len(), det.len());
    }
    let values = match &a.data {
        NpyData::C128(v) => v.clone(),
        _ => floats(a).into_iter().map(|x| x.into()).collect(),
    };
    Ok(Some(Spectrum2D {
        excitation: exc.to_vec(),
        detection: det.to_vec(),
        values,
        mode,
        unit,
    }))
}

fn parse_window(w: &str, unit: &str) -> anyhow::Result<[f64; 2]> {
    let parsed = w.split_once(':').and_then(|(lo, hi)| {
        Some((
            lo.trim().parse::<f64>().ok()?,
            hi.trim().parse::<f64>().ok()?,
        ))
    });
    match parsed {
        Some((lo, hi)) if lo.is_finite() && hi.is_finite() && hi > lo => Ok([lo, hi]),
        _ => bail!("--window `{w}`: write LO:HI with LO < HI in {unit}"),
    }
}

/// The run's metadata and the chosen output's name and entry.
fn choose(
    a: &SpectrumArgs,
    meta_path: &Path,
) -> anyhow::Result<(serde_json::Value, String, serde_json::Value)> {
    let meta: serde_json::Value =
        serde_json::from_str(&pathsieve::input_text::read_text(meta_path)?).with_context(|| {
            format!(
                "{}: not the metadata of a `pathsieve simulate` run",
                meta_path.display()
            )
        })?;
    let outputs = meta["outputs"].as_array().cloned().unwrap_or_default();
    let names: Vec<String> = outputs
        .iter()
        .filter_map(|o| o["name"].as_str().map(String::from))
        .collect();
    let name = match &a.output {
        Some(n) if names.contains(n) => n.clone(),
        Some(n) => bail!(
            "no output `{n}` in {}; it has: {}",
            meta_path.display(),
            names.join(", ")
        ),
        None => names
            .first()
            .cloned()
            .ok_or_else(|| anyhow::anyhow!("{}: the run has no outputs", meta_path.display()))?,
    };
    let o = outputs
        .iter()
        .find(|o| o["name"] == name.as_str())
        .cloned()
        .unwrap_or_default();
    Ok((meta, name, o))
}

/// The ideal and (unless `--ideal-only`) as-measured spectra of output `name`.
fn load(
    a: &SpectrumArgs,
    layout: &Layout,
    name: &str,
    mode: ExcitationAxis,
    unit: EnergyUnit,
) -> anyhow::Result<(Spectrum2D, Option<Spectrum2D>)> {
    let npz = a
        .run
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("npz"));
    let safe = pathsieve::combine::data_file::safe_name(name);
    let members = vec![
        "excitation".to_string(),
        "detection".to_string(),
        format!("{safe}.ideal_spectrum"),
        format!("{safe}.spectrum"),
    ];
    let arrays = read_arrays(layout, &a.run, npz, &members)?;
    let axis = |m: &str| arrays.iter().find(|x| x.0 == m).map(|x| floats(&x.1));
    let (Some(exc), Some(det)) = (axis("excitation"), axis("detection")) else {
        bail!("{}: no spectrum axes (excitation, detection): the run had no spectra (it needs t1 and the last delay as ranges)", a.run.display());
    };
    let Some(ideal) = spectrum_of(&arrays, &members[2], &exc, &det, mode, unit)? else {
        bail!("{}: no array `{}`", a.run.display(), members[2]);
    };
    let measured = if a.ideal_only {
        None
    } else {
        spectrum_of(&arrays, &members[3], &exc, &det, mode, unit)?
    };
    Ok((ideal, measured))
}

/// The picture's title and window.
fn title_and_window(
    a: &SpectrumArgs,
    meta: &serde_json::Value,
    name: &str,
    component: Component,
    ideal: &Spectrum2D,
    unit_label: &str,
) -> anyhow::Result<(String, [f64; 2])> {
    let (exc, det) = (&ideal.excitation, &ideal.detection);
    let window = match &a.window {
        Some(w) => parse_window(w, unit_label)?,
        None => match meta["window"].as_array() {
            Some(w) if w.len() == 2 => [w[0].as_f64().unwrap_or(0.0), w[1].as_f64().unwrap_or(0.0)],
            _ => [
                exc[0].max(det[0]),
                exc[exc.len() - 1].min(det[det.len() - 1]),
            ],
        },
    };
    let at: Vec<String> = meta["spectrum_at_fs"]
        .as_array()
        .into_iter()
        .flatten()
        .filter_map(|p| Some(format!("{} = {} fs", p[0].as_str()?, p[1].as_f64()?)))
        .collect();
    let title = a.title.clone().unwrap_or_else(|| {
        format!(
            "{} — output {name}{}; {}; excitation ω1 vertical, detection ω3 horizontal ({unit_label})",
            meta["experiment"].as_str().unwrap_or(""),
            if at.is_empty() { String::new() } else { format!(", {}", at.join(", ")) },
            match component {
                Component::Real => "real part (absorptive, signed)",
                Component::Magnitude => "magnitude",
            }
        )
    });
    Ok((title, window))
}

/// Run the subcommand.
pub fn run(a: SpectrumArgs) -> anyhow::Result<u8> {
    if !(a.png_scale.is_finite() && a.png_scale > 0.0 && a.png_scale <= 16.0) {
        bail!("--png-scale {}: use a number in (0, 16]", a.png_scale);
    }
    if a.out
        .extension()
        .is_none_or(|e| !e.eq_ignore_ascii_case("svg"))
    {
        bail!("--out {}: end the picture's path in .svg", a.out.display());
    }
    let layout = Layout::from_out(&a.run).map_err(|_| {
        anyhow::anyhow!(
            "{}: give the --out of a `pathsieve simulate` run (RUN.npz or RUN.npy); to draw an experiment, simulate it first: pathsieve simulate EXPERIMENT --delay t1=0:4:800 --delay t3=0:4:800 --out run.npz",
            a.run.display()
        )
    })?;
    let meta_path = layout.meta();
    let png_path = a.out.with_extension("png");
    let mut targets = vec![a.out.as_path()];
    if a.png {
        targets.push(png_path.as_path());
    }
    check_targets(&targets, &[a.run.as_path(), meta_path.as_path()], a.force)?;
    let (meta, name, o) = choose(&a, &meta_path)?;
    let unit_label = meta["axis_unit"].as_str().unwrap_or("");
    let unit = EnergyUnit::parse(unit_label).ok_or_else(|| {
        anyhow::anyhow!(
            "{}: axis_unit `{unit_label}` is not cm-1, eV or THz",
            meta_path.display()
        )
    })?;
    let mode = match o["excitation_axis"].as_str() {
        Some("flipped") => ExcitationAxis::Flipped,
        Some("folded") => ExcitationAxis::Folded,
        _ => ExcitationAxis::Direct,
    };
    let (ideal, measured) = load(&a, &layout, &name, mode, unit)?;
    let leak = measured.as_ref().map(|m| {
        let mut d = m.clone();
        for (x, y) in d.values.iter_mut().zip(&ideal.values) {
            *x -= y;
        }
        d
    });
    let component = match a.component {
        Shown::Real => Component::Real,
        Shown::Magnitude => Component::Magnitude,
        Shown::Auto if mode == ExcitationAxis::Folded => Component::Real,
        Shown::Auto => Component::Magnitude,
    };
    let (title, window) = title_and_window(&a, &meta, &name, component, &ideal, unit_label)?;
    let mut panels = vec![Panel {
        caption: "ideal".into(),
        spectrum: &ideal,
    }];
    if let (Some(m), Some(l)) = (&measured, &leak) {
        panels.push(Panel {
            caption: "as measured".into(),
            spectrum: m,
        });
        panels.push(Panel {
            caption: "leak = measured − ideal".into(),
            spectrum: l,
        });
    }
    let svg = spectrum_svg(&SpectrumPicture {
        title,
        panels,
        component,
        window,
    });
    let mut files = vec![(a.out.clone(), svg.clone().into_bytes())];
    if a.png {
        files.push((
            png_path,
            super::simulate_files::png_bytes(&svg, a.png_scale)?,
        ));
    }
    write_many_atomic(&files, a.force)?;
    let listed: Vec<String> = files.iter().map(|(p, _)| p.display().to_string()).collect();
    eprintln!("wrote {}", listed.join(", "));
    Ok(0)
}
