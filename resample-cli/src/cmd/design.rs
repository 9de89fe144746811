//! `rerate design`: show (or export) the filter a conversion would use.

use std::io::Write;
use std::path::Path;

use anyhow::{Context, Result};
use resample_core::FilterSpec;

use crate::io::staged::StagedFile;

use crate::args::check_filter;
use crate::args::design::DesignArgs;
use crate::exit::Status;
use crate::report::design::{plan_text, report_text};

/// Run `rerate design`.
pub fn run(args: &DesignArgs) -> Result<Status> {
    check_filter(Some(args.stopband_db), args.passband)?;
    let spec = FilterSpec::new(args.in_rate, args.out_rate)
        .stopband_db(args.stopband_db)
        .passband(args.passband)
        .phase(args.phase.phase());
    // A clock correction, or a pair whose fixed table is over the budget: the any-ratio
    // engine's table (what `convert` would run).
    let spec = spec.stage_choice(crate::args::stage_choice(args.one_stage));
    let fixed = if args.clock_ppm.is_zero() {
        Some(spec.plan())
    } else {
        None
    };
    let why = match &fixed {
        None => Some(crate::convert::Why::Clock(args.clock_ppm)),
        Some(Err(e)) => crate::convert::Why::instead_of(e),
        Some(Ok(_)) => None,
    };
    if let Some(why) = why {
        return any_ratio(args, &spec, &why);
    }
    let plan = fixed
        .unwrap_or_else(|| spec.plan())
        .context("cannot design the filter")?;
    if let Some(path) = &args.export {
        export(path, export_text(&plan).as_bytes(), args.force)?;
    }
    let phase = spec.phase_response();
    let mut out = std::io::stdout().lock();
    if args.json {
        writeln!(
            out,
            "{}",
            crate::report::json::line(&crate::report::json::Design::of_plan(
                &plan,
                phase == resample_core::Phase::Minimum
            ))
        )?;
    } else {
        match plan.single() {
            Some(design) => write!(out, "{}", report_text(design.report(), phase))?,
            None => write!(out, "{}", plan_text(&plan))?,
        }
        if let Some(path) = &args.export {
            let what = if plan.is_two_stage() {
                "taps of both stages"
            } else {
                "taps"
            };
            writeln!(out, "{what} written to {}", path.display())?;
        }
    }
    Ok(Status::Success)
}

/// The export file: for one stage the prototype taps, one per line, in the shortest
/// decimal that parses back to the same bits (as before two stages existed). For two
/// stages each stage's taps follow a header line that starts with `#`:
/// `# stage K of 2: KIND, A Hz -> B Hz, up L, down M, N taps` (KIND `half-band` or
/// `polyphase`), in the order the signal goes through them.
pub fn export_text(plan: &resample_core::StagePlan) -> String {
    let n: usize = plan.stages().iter().map(|d| d.taps().len()).sum();
    let mut text = String::with_capacity(n * 24 + 200);
    let facts = crate::report::stages::StageFacts::of(plan);
    let two = plan.is_two_stage();
    for (k, (d, f)) in plan.stages().iter().zip(&facts.list).enumerate() {
        if two {
            text.push_str(&format!(
                "# stage {} of 2: {}, {} Hz -> {} Hz, up {}, down {}, {} taps\n",
                k + 1,
                f.kind,
                f.in_rate,
                f.out_rate,
                f.up,
                f.down,
                d.taps().len()
            ));
        }
        for t in d.taps() {
            // Rust prints the shortest decimal that parses back to the same bits.
            text.push_str(&format!("{t:e}\n"));
        }
    }
    text
}

/// `design` for the any-ratio engine: its table report (`--export` writes the prototype at
/// P phases per input sample is not offered: it is refused as a usage error).
fn any_ratio(args: &DesignArgs, spec: &FilterSpec, why: &crate::convert::Why) -> Result<Status> {
    if args.export.is_some() {
        return Err(crate::exit::UsageError(format!(
            "--export writes a fixed-ratio prototype; this design runs the {} engine ({})",
            crate::convert::ANY_RATIO_ENGINE,
            why.words()
        ))
        .into());
    }
    let g = spec
        .design_glide()
        .context("cannot design the any-ratio table")?;
    let clock = args.clock_ppm;
    let ctx = crate::report::design::GlideContext {
        in_rate: args.in_rate,
        out_rate: args.out_rate,
        clock_ppm: clock.ppm(),
        clock_text: clock.to_string(),
        true_in_rate: clock.true_rate(args.in_rate),
        ratio: clock.ratio(args.in_rate, args.out_rate),
        why: why.words(),
    };
    let mut out = std::io::stdout().lock();
    if args.json {
        writeln!(
            out,
            "{}",
            crate::report::design::glide_json(g.report(), &ctx)
        )?;
    } else {
        write!(
            out,
            "{}",
            crate::report::design::glide_text(g.report(), &ctx)
        )?;
    }
    Ok(Status::Success)
}

/// Write `bytes` to `path` through a temporary file moved into place when complete; never
/// replace an existing file unless `force`.
fn export(path: &Path, bytes: &[u8], force: bool) -> Result<()> {
    let (staged, mut file) =
        StagedFile::create(path, force).map_err(|e| crate::error::about_file(path, e))?;
    file.write_all(bytes)
        .with_context(|| format!("{}: cannot write", path.display()))?;
    drop(file);
    staged
        .commit()
        .map_err(|e| crate::error::about_file(path, e))?;
    Ok(())
}
