//! The files of `pathsieve simulate`: where each array goes (NPZ archives or one NPY per
//! array), the spectra of every output (ideal, as measured, leak), the metadata sidecar that is
//! also the `--json` summary, and one picture per output (SVG, PNG with `--png`).

use super::simulate_summary::{name_of, OutputSummary, Summary};
use anyhow::bail;
use num_complex::Complex64;
use pathsieve::combine::data_file::{npy_path_for, safe_name};
use pathsieve::export::npy::{npy_c128, npy_f64};
use pathsieve::export::npz::write_npz;
use pathsieve::model::{Experiment, PathwayClass};
use pathsieve::render::spectrum_svg::{spectrum_svg, Component, Panel, SpectrumPicture};
use pathsieve::selection::Selection;
use pathsieve::signature::Signature;
use pathsieve::simulate::run::{excitation_axis, kept_classes, CycleRun};
use pathsieve::simulate::{ideal_outputs, Response};
use pathsieve::simulate::{
    spectrum_2d, transition_window, DelayGrid, Dynamics, EnergyUnit, ExcitationAxis, Spectrum2D,
    SpectrumRequest,
};
use std::path::{Path, PathBuf};

/// Where the arrays go.
pub struct Layout {
    out: PathBuf,
    npz: bool,
}

impl Layout {
    /// From `--out`: `.npz` or `.npy`.
    pub fn from_out(out: &Path) -> anyhow::Result<Layout> {
        let ext = out
            .extension()
            .and_then(|e| e.to_str())
            .unwrap_or("")
            .to_ascii_lowercase();
        match ext.as_str() {
            "npz" => Ok(Layout { out: out.to_path_buf(), npz: true }),
            "npy" => Ok(Layout { out: out.to_path_buf(), npz: false }),
            other => bail!("--out: unknown extension `.{other}`; end the path in .npz (archives) or .npy (one file per array)"),
        }
    }

    pub fn stem(&self) -> String {
        let file = self
            .out
            .file_name()
            .map(|n| n.to_string_lossy().into_owned())
            .unwrap_or_default();
        let lower = file.to_ascii_lowercase();
        match lower.rfind('.') {
            Some(i) if lower.ends_with(".npz") || lower.ends_with(".npy") => file[..i].to_string(),
            _ => file,
        }
    }

    /// A sibling file `STEM.SUFFIX`.
    pub fn sibling(&self, suffix: &str) -> PathBuf {
        self.out.with_file_name(format!("{}.{suffix}", self.stem()))
    }

    /// The per-step data file.
    pub fn steps(&self) -> PathBuf {
        self.sibling(if self.npz { "steps.npz" } else { "steps.npy" })
    }

    /// The metadata sidecar.
    pub fn meta(&self) -> PathBuf {
        self.sibling("meta.json")
    }

    /// The picture of output `name` with extension `ext`.
    pub fn picture(&self, name: &str, ext: &str) -> PathBuf {
        self.sibling(&format!("{}.{ext}", safe_name(name)))
    }

    /// The file of array `member` (the archive itself for NPZ).
    pub fn array(&self, member: &str) -> PathBuf {
        if self.npz {
            self.out.clone()
        } else {
            npy_path_for(&self.out, member)
        }
    }
}

/// The array names of one output.
fn members(name: &str, measured: bool, spectra: bool) -> Vec<String> {
    let n = safe_name(name);
    let mut v = Vec::new();
    if measured {
        v.push(format!("{n}.time"));
    }
    v.push(format!("{n}.ideal_time"));
    if spectra {
        if measured {
            v.push(format!("{n}.spectrum"));
        }
        v.push(format!("{n}.ideal_spectrum"));
    }
    v
}

/// True when the grid gives a 2D spectrum (three delays or more, the first and last evenly
/// spaced with two points or more).
pub fn spectra_possible(grid: &DelayGrid) -> bool {
    let n = grid.axes.len();
    n >= 3 && grid.axes[0].step().is_some() && grid.axes[n - 1].step().is_some()
}

/// The ideal kept signal of every wanted output (no cycle).
pub fn ideal_data(sel: &Selection, resp: &Response) -> Vec<OutputData> {
    ideal_outputs(sel, resp)
        .into_iter()
        .map(|(name, values)| {
            let kept = sel
                .outputs
                .iter()
                .find(|o| o.name == name)
                .map(|o| o.kept.clone())
                .unwrap_or_default();
            let classes = kept_classes(resp, &kept);
            OutputData {
                name,
                kept,
                mode: excitation_axis(&classes),
                classes,
                real: false,
                measured: None,
                ideal: values,
            }
        })
        .collect()
}

/// The outputs of a cycle run, as measured and ideal.
pub fn measured_data(run: &CycleRun, resp: &Response) -> Vec<OutputData> {
    run.combined
        .outputs
        .iter()
        .zip(&run.ideal)
        .map(|(o, ideal)| {
            let classes = kept_classes(resp, &o.kept);
            OutputData {
                name: o.name.clone(),
                kept: o.kept.clone(),
                mode: excitation_axis(&classes),
                classes,
                real: o.real,
                measured: Some(o.values.clone()),
                ideal: ideal.clone(),
            }
        })
        .collect()
}

/// Every file a run writes, known before any work (for the target check).
pub fn plan(
    layout: &Layout,
    outputs: &[String],
    delays: &[String],
    grid: &DelayGrid,
    measured: bool,
    png: bool,
) -> Vec<PathBuf> {
    let spectra = spectra_possible(grid);
    let mut names: Vec<String> = outputs
        .iter()
        .flat_map(|o| members(o, measured, spectra))
        .collect();
    names.extend(delays.iter().cloned());
    if spectra {
        names.extend(["excitation".to_string(), "detection".to_string()]);
    }
    let mut paths: Vec<PathBuf> = names.iter().map(|m| layout.array(m)).collect();
    paths.dedup();
    if measured {
        paths.push(layout.steps());
    }
    paths.push(layout.meta());
    if spectra {
        for o in outputs {
            paths.push(layout.picture(o, "svg"));
            if png {
                paths.push(layout.picture(o, "png"));
            }
        }
    }
    paths
}

/// One output's data.
pub struct OutputData {
    /// Output name.
    pub name: String,
    /// Kept signatures.
    pub kept: Vec<Signature>,
    /// Classes of the kept pathways.
    pub classes: Vec<PathwayClass>,
    /// How the excitation axis is read.
    pub mode: ExcitationAxis,
    /// True when the combined output is real.
    pub real: bool,
    /// As measured (with a cycle).
    pub measured: Option<Vec<Complex64>>,
    /// Ideal.
    pub ideal: Vec<Complex64>,
}

/// The largest modulus of a spectrum inside the window (on both axes).
fn window_peak(s: &Spectrum2D, w: [f64; 2]) -> f64 {
    let inside = |x: f64| x >= w[0] && x <= w[1];
    let mut m: f64 = 0.0;
    for (i, _) in s.excitation.iter().enumerate().filter(|p| inside(*p.1)) {
        for (j, _) in s.detection.iter().enumerate().filter(|p| inside(*p.1)) {
            m = m.max(s.at(i, j).norm());
        }
    }
    m
}

/// A ratio as a percentage with three significant digits (`0.0123 %`, `6070 %`).
fn percent(r: f64) -> String {
    let pct = 100.0 * r;
    let digits = if pct >= 100.0 {
        0
    } else {
        (2.0 - pct.abs().max(1e-12).log10().floor()).clamp(0.0, 12.0) as usize
    };
    format!("{pct:.digits$} %")
}

fn peak(v: &[Complex64]) -> f64 {
    v.iter().map(|x| x.norm()).fold(0.0, f64::max)
}

fn array_bytes(shape: &[usize], v: &[Complex64], real: bool) -> anyhow::Result<Vec<u8>> {
    Ok(if real {
        npy_f64(shape, &v.iter().map(|x| x.re).collect::<Vec<_>>())?
    } else {
        npy_c128(shape, v)?
    })
}

/// What the spectra are computed with.
pub struct SpectrumSetup<'a> {
    pub grid: &'a DelayGrid,
    pub fixed: Vec<usize>,
    pub unit: EnergyUnit,
    pub frame_in_unit: f64,
    pub pad: usize,
    pub window: [f64; 2],
    pub title: &'a str,
    pub at_label: String,
    pub png_scale: Option<f32>,
}

/// The spectrum of one output's data.
fn spectrum(
    values: &[Complex64],
    s: &SpectrumSetup,
    mode: ExcitationAxis,
) -> anyhow::Result<Spectrum2D> {
    let req = SpectrumRequest {
        unit: s.unit,
        frame: s.frame_in_unit,
        min_points: s.pad,
        zone: [0.0, 0.0],
        mode,
    };
    Ok(spectrum_2d(values, s.grid, &s.fixed, &req)?)
}

/// The default window of the pictures in `unit`.
pub fn default_window(exp: &Experiment, dyn_: &Dynamics, unit: EnergyUnit) -> Option<[f64; 2]> {
    let w = transition_window(exp.levels.as_ref()?, dyn_)?;
    let conv = |x: f64| unit.from_angular(dyn_.energy_unit.to_angular(x));
    Some([conv(w[0]), conv(w[1])])
}

/// Build every file: arrays, steps, pictures, and finally the sidecar (with the summary
/// completed).
pub fn build(
    layout: &Layout,
    grid: &DelayGrid,
    spec: Option<&SpectrumSetup>,
    summary: &mut Summary,
    outputs: &[OutputData],
) -> anyhow::Result<Vec<(PathBuf, Vec<u8>)>> {
    let shape = grid.shape();
    let mut arrays: Vec<(String, Vec<u8>)> = Vec::new();
    let mut files: Vec<(PathBuf, Vec<u8>)> = Vec::new();
    for o in outputs {
        let n = safe_name(&o.name);
        let mut stored = Vec::new();
        let component = if o.mode == ExcitationAxis::Folded {
            Component::Real
        } else {
            Component::Magnitude
        };
        let ideal_peak = peak(&o.ideal);
        let leak: Option<Vec<Complex64>> = o
            .measured
            .as_ref()
            .map(|m| m.iter().zip(&o.ideal).map(|(a, b)| a - b).collect());
        if let Some(m) = &o.measured {
            arrays.push((format!("{n}.time"), array_bytes(&shape, m, o.real)?));
            stored.push(format!("{n}.time"));
        }
        arrays.push((
            format!("{n}.ideal_time"),
            array_bytes(&shape, &o.ideal, o.real)?,
        ));
        stored.push(format!("{n}.ideal_time"));
        let mut sum = OutputSummary {
            name: o.name.clone(),
            kept: o.kept.clone(),
            classes: o.classes.iter().map(|c| c.short()).collect(),
            excitation_axis: o.mode,
            picture: match component {
                Component::Real => "real part (absorptive, signed)",
                Component::Magnitude => "magnitude",
            },
            real: o.real,
            ideal_peak,
            leak_peak: leak.as_ref().map(|l| peak(l)),
            leak_relative: leak
                .as_ref()
                .map(|l| peak(l) / ideal_peak.max(f64::MIN_POSITIVE)),
            spectrum_ideal_peak: None,
            spectrum_leak_peak: None,
            spectrum_leak_relative: None,
            stored_as: Vec::new(),
        };
        if let Some(s) = spec {
            let svg = output_spectra(o, s, component, &mut sum, &mut arrays, &mut stored)?;
            if let Some(scale) = s.png_scale {
                files.push((layout.picture(&o.name, "png"), png_bytes(&svg, scale)?));
            }
            files.push((layout.picture(&o.name, "svg"), svg.into_bytes()));
        }
        sum.stored_as = stored
            .iter()
            .map(|m| {
                if layout.npz {
                    format!("{} (NPZ member {m})", name_of(&layout.out))
                } else {
                    name_of(&layout.array(m))
                }
            })
            .collect();
        summary.outputs.push(sum);
    }
    for a in &grid.axes {
        arrays.push((a.name.clone(), npy_f64(&[a.times_fs.len()], &a.times_fs)?));
    }
    finish(layout, summary, arrays, files)
}

/// The spectra of one output (ideal, and as measured with the leak), their arrays and
/// figures; returns the picture's SVG.
fn output_spectra(
    o: &OutputData,
    s: &SpectrumSetup,
    component: Component,
    sum: &mut OutputSummary,
    arrays: &mut Vec<(String, Vec<u8>)>,
    stored: &mut Vec<String>,
) -> anyhow::Result<String> {
    let n = safe_name(&o.name);
    let ideal = spectrum(&o.ideal, s, o.mode)?;
    let sshape = [ideal.excitation.len(), ideal.detection.len()];
    arrays.push((
        format!("{n}.ideal_spectrum"),
        npy_c128(&sshape, &ideal.values)?,
    ));
    stored.push(format!("{n}.ideal_spectrum"));
    if arrays.iter().all(|a| a.0 != "excitation") {
        arrays.push((
            "excitation".into(),
            npy_f64(&[sshape[0]], &ideal.excitation)?,
        ));
        arrays.push(("detection".into(), npy_f64(&[sshape[1]], &ideal.detection)?));
    }
    let ideal_window_peak = window_peak(&ideal, s.window);
    sum.spectrum_ideal_peak = Some(ideal_window_peak);
    let mut panels_data: Vec<(String, Spectrum2D)> = vec![("ideal".into(), ideal.clone())];
    if let Some(m) = &o.measured {
        let meas = spectrum(m, s, o.mode)?;
        arrays.push((format!("{n}.spectrum"), npy_c128(&sshape, &meas.values)?));
        stored.push(format!("{n}.spectrum"));
        let mut diff = meas.clone();
        for (d, i) in diff.values.iter_mut().zip(&ideal.values) {
            *d -= i;
        }
        let lp = window_peak(&diff, s.window);
        let rel = lp / ideal_window_peak.max(f64::MIN_POSITIVE);
        sum.spectrum_leak_peak = Some(lp);
        sum.spectrum_leak_relative = Some(rel);
        panels_data.push(("as measured".into(), meas));
        panels_data.push((
            format!(
                "leak = measured − ideal, peak {} of the ideal's",
                percent(rel)
            ),
            diff,
        ));
    }
    let pic = SpectrumPicture {
        title: format!(
            "{} — output {} ({}), {}; {}; excitation ω1 vertical, detection ω3 horizontal{}",
            s.title,
            o.name,
            sum.classes.join(" + "),
            s.at_label,
            sum.picture,
            if o.measured.is_some() {
                "; all panels on the ideal's colour scale"
            } else {
                ""
            }
        ),
        panels: panels_data
            .iter()
            .map(|(c, sp)| Panel {
                caption: c.clone(),
                spectrum: sp,
            })
            .collect(),
        component,
        window: s.window,
    };
    Ok(spectrum_svg(&pic))
}

fn finish(
    layout: &Layout,
    summary: &mut Summary,
    arrays: Vec<(String, Vec<u8>)>,
    mut files: Vec<(PathBuf, Vec<u8>)>,
) -> anyhow::Result<Vec<(PathBuf, Vec<u8>)>> {
    if layout.npz {
        files.push((
            layout.out.clone(),
            write_npz(&arrays).map_err(|m| anyhow::anyhow!(m))?,
        ));
    } else {
        for (m, b) in arrays {
            files.push((layout.array(&m), b));
        }
    }
    if let Some(st) = &summary.steps {
        let bytes = array_bytes(&st.shape, &st.values, st.real)?;
        let b = if layout.npz {
            write_npz(&[("steps".to_string(), bytes)]).map_err(|m| anyhow::anyhow!(m))?
        } else {
            bytes
        };
        files.push((layout.steps(), b));
    }
    summary.files = files
        .iter()
        .map(|(p, _)| name_of(p))
        .chain([name_of(&layout.meta())])
        .collect();
    files.push((layout.meta(), summary.json_bytes()));
    Ok(files)
}

#[cfg(feature = "png")]
pub fn png_bytes(svg: &str, scale: f32) -> anyhow::Result<Vec<u8>> {
    Ok(pathsieve::render::png::svg_to_png(svg, scale)?)
}

#[cfg(not(feature = "png"))]
pub fn png_bytes(_svg: &str, _scale: f32) -> anyhow::Result<Vec<u8>> {
    bail!("this build has no PNG output (the `png` feature); drop --png or rebuild with it")
}
