//! `pathsieve completions SHELL` and `pathsieve man [COMMAND]`: shell completion scripts
//! (clap_complete) and roff manual pages (clap_mangen), both generated from the one clap
//! definition of the commands and written to stdout.

use super::output::print_bytes;
use anyhow::bail;
use clap::{Args, CommandFactory};
use clap_complete::Shell;

/// Arguments of `pathsieve completions`.
#[derive(Args, Debug)]
pub struct CompletionsArgs {
    /// The shell: bash, zsh, fish, powershell or elvish.
    #[arg(value_enum)]
    shell: Shell,
}

/// Arguments of `pathsieve man`.
#[derive(Args, Debug)]
pub struct ManArgs {
    /// A command whose page to write (pathways, design, check, ...); none: the main page.
    #[arg(value_name = "COMMAND")]
    command: Option<String>,
}

/// Write the completion script to stdout.
pub fn run_completions(a: CompletionsArgs) -> anyhow::Result<u8> {
    let mut cmd = super::Cli::command();
    let mut buf = Vec::new();
    clap_complete::generate(a.shell, &mut cmd, "pathsieve", &mut buf);
    print_bytes(&buf)?;
    Ok(0)
}

/// Write the manual page (roff) to stdout.
pub fn run_man(a: ManArgs) -> anyhow::Result<u8> {
    let mut cmd = super::Cli::command();
    cmd.build();
    let page = match &a.command {
        None => cmd,
        Some(name) => match cmd.find_subcommand(name) {
            Some(sub) => {
                let full = format!("pathsieve-{}", sub.get_name());
                // clap names are `&'static str` (no `string` feature); one leak per run.
                sub.clone().name(&*full.leak())
            }
            None => {
                let names: Vec<&str> = cmd.get_subcommands().map(|c| c.get_name()).collect();
                bail!(
                    "no command `{name}`; man pages exist for: {}",
                    names.join(", ")
                )
            }
        },
    };
    let mut buf = Vec::new();
    clap_mangen::Man::new(page).render(&mut buf)?;
    print_bytes(&buf)?;
    Ok(0)
}
