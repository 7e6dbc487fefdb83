//! `eigentherm study`: every analysis on every file, sector and observable, written to a
//! report folder.

use super::args::{DynamicsArgs, JsonArg};
use super::output;
use super::scaling::PipelineArgs;
use crate::error::Result;
use crate::pipeline::flags::StudyFlags;
use crate::pipeline::study::{study, StudyRequest};
use std::path::PathBuf;

/// Options of `eigentherm study`.
#[derive(Debug, Clone, clap::Args)]
pub struct Args {
    /// Files, sector, windows, observables and settings.
    #[command(flatten)]
    pub pipeline: PipelineArgs,
    /// Print results.json to stdout too.
    #[command(flatten)]
    pub json: JsonArg,
    /// Output folder (created when missing).
    #[arg(long, value_name = "DIR")]
    pub out: PathBuf,
    /// Files of each figure: svg, pdf (vector, fonts embedded), png (2x), comma-separated
    /// [default: svg,pdf,png].
    #[arg(long, value_name = "LIST")]
    pub figure_format: Option<String>,
    /// Initial states of quenches (adds the section "Quench dynamics") and their time grid.
    #[command(flatten)]
    pub dynamics: DynamicsArgs,
}

impl Args {
    /// The flags as typed (the output folder apart).
    pub fn flags(&self) -> StudyFlags {
        StudyFlags {
            scaling: self.pipeline.flags(),
            dynamics: self.dynamics.flags(),
        }
    }

    /// The request of the study pipeline.
    pub fn resolve(&self) -> Result<StudyRequest> {
        self.flags().request()
    }
}

/// Runs `eigentherm study`.
pub fn run(args: &Args) -> Result<()> {
    let formats = crate::pipeline::flags::figure_formats(args.figure_format.as_deref())?;
    let results = study(&args.resolve()?)?;
    let stage = crate::progress::stage("writing the report folder");
    let written = crate::report::study::write_folder_as(&results, &args.out, formats)?;
    stage.finish_and_clear();
    if args.json.json {
        output::print_json(&results)
    } else {
        output::print(&format!(
            "{}wrote {} files to {}; open {}\n",
            crate::report::text::verdicts_text(&results.scaling),
            written.files.len(),
            args.out.display(),
            written.report.display()
        ))
    }
}
