//! `bandwright`: the command-line adapter over the Bandwright core and plot layers.
//!
//! Arguments are parsed in two steps: clap reads raw text flags ([`args`]), then [`options`]
//! validates them into typed options with engineering notation parsed. Commands read files, call
//! the core, and print tables, CSV, JSON or SVG ([`output`], [`svg`]). Errors go to stderr with
//! exit code 2; nothing here panics on user input.

mod args;
mod crossover;
mod frontend;
mod limits;
mod options;
mod output;
mod spread;
mod step;
mod svg;

use anyhow::{Context, Result};
use clap::Parser;
use std::process::ExitCode;

fn main() -> ExitCode {
    let cli = args::Cli::parse();
    match run(cli) {
        Ok(true) => ExitCode::SUCCESS,
        Ok(false) => ExitCode::from(1),
        Err(error) => {
            eprintln!("error: {error:#}");
            ExitCode::from(2)
        }
    }
}

/// Runs a command; `Ok(false)` is a completed check that failed (exit status 1).
fn run(cli: args::Cli) -> Result<bool> {
    match cli.command {
        args::Command::Sweep(raw) => {
            let options = options::SweepOptions::from_args(raw)?;
            let design = read_design(&options.design)?;
            let analysis = output::Analysis::run(&design, &options.grid)?;
            if let Some(path) = &options.svg {
                svg::write_bode(path, &design.name, &analysis.response)
                    .with_context(|| format!("cannot write the plot to {}", path.display()))?;
            }
            emit(&output::render_sweep(&analysis, options.format));
            Ok(true)
        }
        args::Command::Info(raw) => {
            let options = options::InfoOptions::from_args(raw)?;
            let design = read_design(&options.design)?;
            let analysis = output::Analysis::run(&design, &options.grid)?;
            emit(&output::render_info(&design, &analysis, &options)?);
            Ok(true)
        }
        args::Command::Fit(raw) => {
            let command = options::FitCommand::from_args(*raw)?;
            let result = bandwright::fit::fit(&command.requirement, command.topology, &command.options)?;
            let ranked = command.yield_rank.as_ref().map(|y| y.rank(&result)).transpose()?;
            let result = ranked.as_ref().map_or(&result, |r| &r.fit);
            if let Some(path) = &command.save {
                let best = result.alternatives.first().ok_or_else(|| anyhow::anyhow!("no alternative to save"))?;
                std::fs::write(path, best.design.to_json() + "\n")
                    .with_context(|| format!("cannot write the design to {}", path.display()))?;
            }
            emit(&output::render_fit(result, ranked.as_ref(), command.format));
            Ok(true)
        }
        args::Command::Spread(raw) => {
            let options = spread::SpreadOptions::from_args(*raw)?;
            let design = read_design(&options.design)?;
            let run = spread::run(&design, &options)?;
            emit(&spread::render(&run, options.format));
            Ok(true)
        }
        args::Command::Step(raw) => {
            let options = step::StepOptions::from_args(raw)?;
            let design = read_design(&options.design)?;
            emit(&step::run(&design, &options)?);
            Ok(true)
        }
        args::Command::Frontend(raw) => {
            let options = frontend::FrontendOptions::from_args(*raw)?;
            let report = bandwright::adc::plan_front_end(&options.requirement, &options.options)?;
            if let Some(path) = &options.save {
                std::fs::write(path, report.design.to_json() + "\n")
                    .with_context(|| format!("cannot write the design to {}", path.display()))?;
            }
            emit(&frontend::render(&report, options.format));
            Ok(true)
        }
        args::Command::Mask(raw) => {
            let (text, pass) = limits::run(&raw)?;
            emit(&text);
            Ok(pass)
        }
        args::Command::Crossover(raw) => {
            let mut options = crossover::CrossoverOptions::from_args(*raw)?;
            let run = crossover::run(&mut options)?;
            if let Some(path) = &options.svg {
                let title = if run.file.name.is_empty() { "crossover" } else { &run.file.name };
                crossover::write_svg(path, &run, title)
                    .with_context(|| format!("cannot write the plot to {}", path.display()))?;
            }
            emit(&crossover::render(&run, &options));
            Ok(true)
        }
        args::Command::Cautions => {
            emit(&output::render_cautions());
            Ok(true)
        }
    }
}

fn read_design(path: &std::path::Path) -> Result<bandwright::Design> {
    let text = std::fs::read_to_string(path).with_context(|| format!("cannot read design file {}", path.display()))?;
    bandwright::parse_design(&text).with_context(|| format!("{}", path.display()))
}

/// Writes a command's output to stdout. A reader that stops early (`bandwright … | head`) closes
/// the pipe; that ends the output quietly instead of as a panic.
fn emit(text: &str) {
    use std::io::Write as _;
    let mut out = std::io::stdout().lock();
    if let Err(error) = out.write_all(text.as_bytes()).and_then(|()| out.flush()) {
        if error.kind() != std::io::ErrorKind::BrokenPipe {
            eprintln!("error: cannot write the output: {error}");
        }
    }
}
