//! Writing a picture of `draw`: the SVG at `--out` (`-`: standard output), and with `--png` a
//! PNG beside it (the same name with `.png`), rendered in pure Rust with the bundled font. Both files are checked
//! before any work and written together (`safe_write::write_many_atomic`): neither appears
//! half-written, and a PNG that cannot be rendered stops the SVG too.

use anyhow::{bail, Context};
use clap::Args;
use std::path::{Path, PathBuf};

/// Largest `--png-scale`.
const MAX_SCALE: f32 = 8.0;

/// `--png` and `--png-scale`, shared by every picture of `draw`.
#[derive(Args, Debug, Clone)]
pub struct PngArgs {
    /// Also write a PNG beside the SVG: OUT.svg's name with `.png` (rendered in pure Rust with
    /// the bundled DejaVu Sans; for slides).
    #[arg(long)]
    pub png: bool,
    /// PNG pixels per SVG pixel, 0 < S <= 8 (2 suits slides and print).
    #[arg(long, value_name = "S", default_value_t = 2.0, requires = "png")]
    pub png_scale: f32,
}

impl PngArgs {
    /// Every file the picture will write, the SVG first; refuses an `--out` that itself ends in
    /// `.png` (it names the SVG) and a scale out of range, before any work.
    pub fn targets(&self, out: &Path) -> anyhow::Result<Vec<PathBuf>> {
        let is_png = out
            .extension()
            .is_some_and(|e| e.eq_ignore_ascii_case("png"));
        if super::stdio::is_dash(out) {
            if self.png {
                bail!("--out - writes the SVG to standard output; --png needs a file name (give --out OUT.svg)");
            }
            return Ok(vec![out.to_path_buf()]);
        }
        if is_png {
            bail!(
                "--out {} names the SVG file; give OUT.svg and add --png to get OUT.png beside it",
                out.display()
            );
        }
        if !self.png {
            return Ok(vec![out.to_path_buf()]);
        }
        if !(self.png_scale.is_finite() && self.png_scale > 0.0 && self.png_scale <= MAX_SCALE) {
            bail!(
                "--png-scale {}: give a number above 0 and at most {MAX_SCALE}",
                self.png_scale
            );
        }
        if cfg!(not(feature = "png")) {
            bail!("this pathsieve was built without the `png` feature; rebuild with `--features png` or convert the SVG");
        }
        Ok(vec![out.to_path_buf(), out.with_extension("png")])
    }
}

/// Write the SVG to `targets[0]` and, when asked, its PNG to `targets[1]`; `what` names the
/// picture in the message on stderr.
pub fn write_picture(
    targets: &[PathBuf],
    svg: &str,
    png: &PngArgs,
    force: bool,
    what: &str,
) -> anyhow::Result<()> {
    if super::stdio::is_dash(&targets[0]) {
        super::output::print(svg)?;
        return Ok(());
    }
    let mut files = vec![(targets[0].clone(), svg.as_bytes().to_vec())];
    if let Some(path) = targets.get(1) {
        files.push((path.clone(), render_png(svg, png.png_scale)?));
    }
    pathsieve::safe_write::write_many_atomic(&files, force)
        .with_context(|| format!("writing {}", targets[0].display()))?;
    match targets.get(1) {
        Some(p) => eprintln!(
            "wrote {what} to {} and {}",
            targets[0].display(),
            p.display()
        ),
        None => eprintln!("wrote {what} to {}", targets[0].display()),
    }
    Ok(())
}

#[cfg(feature = "png")]
fn render_png(svg: &str, scale: f32) -> anyhow::Result<Vec<u8>> {
    Ok(pathsieve::render::png::svg_to_png(svg, scale)?)
}

#[cfg(not(feature = "png"))]
fn render_png(_svg: &str, _scale: f32) -> anyhow::Result<Vec<u8>> {
    bail!("this pathsieve was built without the `png` feature")
}
