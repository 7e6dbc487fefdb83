//! `eigentherm completions SHELL` and `eigentherm manpage`: the completion script of a
//! shell and the manual pages, both generated from the clap definition of the command
//! line (so they never fall behind a new flag).
//!
//! Scripts and pages are rendered into memory first, then printed through
//! [`super::output`]: a reader that goes away ends the command quietly, and a page
//! written to a folder goes to a temporary name first, then is renamed.

use super::output;
use crate::error::{Error, Result};
use clap::CommandFactory;
use std::path::{Path, PathBuf};

/// Shells with a completion script.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum Shell {
    /// bash (load with `source <(eigentherm completions bash)`).
    Bash,
    /// zsh (a `_eigentherm` file in a folder of `$fpath`).
    Zsh,
    /// fish (an `eigentherm.fish` file in `~/.config/fish/completions`).
    Fish,
}

/// Options of `eigentherm completions`.
#[derive(Debug, clap::Args)]
pub struct CompletionsArgs {
    /// The shell to write the completion script for.
    #[arg(value_enum, value_name = "SHELL")]
    pub shell: Shell,
}

/// Options of `eigentherm manpage`.
#[derive(Debug, clap::Args)]
pub struct ManpageArgs {
    /// Write eigentherm.1 and one page per subcommand (eigentherm-levels.1, ...) into this folder instead of printing eigentherm.1 to stdout.
    #[arg(long, value_name = "DIR", value_hint = clap::ValueHint::DirPath)]
    pub dir: Option<PathBuf>,
}

/// The command line as clap sees it, with the name the user types.
fn command() -> clap::Command {
    super::Cli::command().bin_name("eigentherm")
}

/// Runs `eigentherm completions SHELL`: the script on stdout.
pub fn run_completions(args: &CompletionsArgs) -> Result<()> {
    let shell = match args.shell {
        Shell::Bash => clap_complete::Shell::Bash,
        Shell::Zsh => clap_complete::Shell::Zsh,
        Shell::Fish => clap_complete::Shell::Fish,
    };
    let mut script = Vec::new();
    clap_complete::generate(shell, &mut command(), "eigentherm", &mut script);
    output::print(&String::from_utf8_lossy(&script))
}

/// Renders the manual page of `cmd` (roff), every page's footer naming this version.
fn render(cmd: clap::Command) -> Result<(String, Vec<u8>)> {
    let man = clap_mangen::Man::new(cmd)
        .source(format!("eigentherm {}", env!("CARGO_PKG_VERSION")))
        .manual("eigentherm manual");
    let mut page = Vec::new();
    man.render(&mut page)
        .map_err(|e| Error::other(format!("cannot render the manual page: {e}")))?;
    Ok((man.get_filename(), page))
}

/// The command line built for the manual pages (subcommands named `eigentherm-levels`
/// and so on; no `help` subcommand: its page would only repeat the list).
fn built() -> clap::Command {
    let mut cmd = command().disable_help_subcommand(true);
    cmd.build();
    cmd
}

/// The manual pages: the main command's first, then one per visible subcommand.
fn pages() -> Result<Vec<(String, Vec<u8>)>> {
    let cmd = built();
    let mut out = vec![render(cmd.clone())?];
    for sub in cmd.get_subcommands().filter(|s| !s.is_hide_set()) {
        out.push(render(sub.clone())?);
    }
    Ok(out)
}

/// Writes every page into `dir` (created if missing) and prints the paths written.
fn write_pages(dir: &Path) -> Result<()> {
    std::fs::create_dir_all(dir).map_err(|e| Error::io(dir, e))?;
    let mut list = String::new();
    for (name, page) in pages()? {
        let path = dir.join(name);
        crate::report::json::write_atomic(&path, &page)?;
        list.push_str(&format!("{}\n", path.display()));
    }
    output::print(&list)
}

/// Runs `eigentherm manpage`: eigentherm.1 on stdout, or every page into `--dir`.
pub fn run_manpage(args: &ManpageArgs) -> Result<()> {
    match &args.dir {
        Some(dir) => write_pages(dir),
        None => {
            let (_, page) = render(built())?;
            output::print(&String::from_utf8_lossy(&page))
        }
    }
}

/// Names of the subcommands, in the order of `eigentherm --help` (without `help`).
pub fn subcommand_names() -> Vec<String> {
    command()
        .get_subcommands()
        .map(|s| s.get_name().to_string())
        .collect()
}
