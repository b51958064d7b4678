//! `crescendo check`: plan the story, check its claims and lint it without
//! drawing; print a summary (or JSON for CI) and, with `--explain-sql`, the
//! queries sent to a database.

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use crescendo_diag::Diagnostic;

use crate::cli::{DataArgs, Format, LintArgs};
use crate::planning::{plan_quietly, run_lint};
use crate::{EXIT_CLAIM, EXIT_STORY};

fn diag_json(d: &Diagnostic) -> serde_json::Value {
    let (file, line, column) = match d.location() {
        Some((f, l, c)) => (Some(f), Some(l), Some(c)),
        None => (None, None, None),
    };
    serde_json::json!({
        "severity": d.severity,
        "code": d.code,
        "message": d.message,
        "file": file,
        "line": line,
        "column": column,
        "notes": d.notes,
        "help": d.help,
    })
}

pub fn run(
    story: &Path,
    format: Format,
    explain_sql: bool,
    (data, cache): (&DataArgs, Option<PathBuf>),
    lint: &LintArgs,
    color: bool,
) -> ExitCode {
    let result = plan_quietly(story, data, cache.clone());
    if let (Ok(p), Some(dir)) = (&result, &cache) {
        // as a good build does: forget entries this story no longer uses
        crate::incremental::prune(dir, &p.report);
    }
    let (planned, mut errors) = match result {
        Ok(p) => (Some(p), Vec::new()),
        Err(d) => (None, d),
    };
    if let Some(p) = &planned {
        errors.extend(try_plugin_frames(p));
    }
    let findings = planned
        .as_ref()
        .map(|p| run_lint(p, lint))
        .unwrap_or_default();
    let (lint_errors, lint_rest): (Vec<Diagnostic>, Vec<Diagnostic>) =
        findings.into_iter().partition(Diagnostic::is_error);
    errors.extend(lint_errors);
    let failed = planned.as_ref().map_or(0, |p| p.failed_claims.len());
    let status = if !errors.is_empty() {
        EXIT_STORY
    } else if failed > 0 {
        EXIT_CLAIM
    } else {
        0
    };
    match format {
        Format::Json => {
            let mut problems: Vec<serde_json::Value> = errors.iter().map(diag_json).collect();
            if let Some(p) = &planned {
                problems.extend(p.failed_claims.iter().map(diag_json));
            }
            problems.extend(lint_rest.iter().map(diag_json));
            if let Some(p) = &planned {
                problems.extend(p.warnings.iter().map(diag_json));
            }
            let report = serde_json::json!({
                "story": story.display().to_string(),
                "ok": status == 0,
                "status": status,
                "diagnostics": problems,
                "frames": planned.as_ref().map(|p| p.plan.frames.len()),
                "values": planned.as_ref().map(|p| p.plan.values.clone()),
                "exact": planned.as_ref().map(|p| p.plan.exact.clone()),
                "claims": planned.as_ref().map(|p| p.plan.claims.clone()),
                "sql": planned.as_ref().filter(|_| explain_sql).map(|p| p.sql.clone()),
                // the streamed views' prefixes: from the cache or computed
                "views": planned.as_ref().map(|p| serde_json::json!({
                    "cached": p.report.cached_views,
                    "computed": p.report.computed_views,
                })),
            });
            match serde_json::to_string_pretty(&report) {
                Ok(s) => say!("{}", crate::output::json(&s)),
                Err(e) => tell!("error: {e}"),
            }
        }
        Format::Human => {
            if !errors.is_empty() {
                crate::output::diagnostics(&errors, color);
            }
            if !lint_rest.is_empty() {
                crate::output::diagnostics(&lint_rest, color);
            }
            if let Some(p) = planned.as_ref().filter(|_| errors.is_empty()) {
                if !p.warnings.is_empty() {
                    crate::output::diagnostics(&p.warnings, color);
                }
                if !p.failed_claims.is_empty() {
                    crate::output::diagnostics(&p.failed_claims, color);
                }
                let plan = &p.plan;
                say!(
                    "{}: {} frame{}, {} value{}, {} claim{}",
                    story.display(),
                    plan.frames.len(),
                    if plan.frames.len() == 1 { "" } else { "s" },
                    plan.values.len(),
                    if plan.values.len() == 1 { "" } else { "s" },
                    plan.claims.len(),
                    if plan.claims.len() == 1 { "" } else { "s" }
                );
                for (name, figure) in &plan.values {
                    // the exact number beside the figure when they differ
                    match plan.exact.get(name) {
                        Some(x)
                            if x.to_string().replace('-', "") != figure.replace([',', '-'], "") =>
                        {
                            say!("  value {name} = {figure} (exactly {x})")
                        }
                        _ => say!("  value {name} = {figure}"),
                    }
                }
                for c in &plan.claims {
                    say!(
                        "  claim {}: \"{}\" ({})",
                        if c.holds { "holds" } else { "FAILS" },
                        c.sentence,
                        c.detail.join("; ")
                    );
                }
                if explain_sql {
                    explain_queries(&p.sql);
                }
            } else {
                let n = errors.iter().filter(|d| d.is_error()).count();
                tell!(
                    "{n} error{} in {}",
                    if n == 1 { "" } else { "s" },
                    story.display()
                );
            }
        }
    }
    ExitCode::from(status)
}

/// `check --explain-sql`: each query a database source ran.
fn explain_queries(sql: &[crescendo_sql::Explained]) {
    if sql.is_empty() {
        say!("no database queries (the story reads no database source)");
    }
    for q in sql {
        match &q.view {
            Some(v) => say!("-- view {v} (data {})", q.data),
            None => say!("-- data {} (all rows)", q.data),
        }
        say!("{};", q.sql);
        for (i, p) in q.params.iter().enumerate() {
            say!("--   ${} = {p:?}", i + 1);
        }
        say!("--   received {} rows, {} bytes", q.rows, q.bytes);
        let remote = q.remote_sql();
        if !remote.is_empty() {
            say!(
                "--   sent on to {} remote scan{} (the coordinator's plan):",
                remote.len(),
                if remote.len() == 1 { "" } else { "s" }
            );
            for r in remote {
                say!("--     {r}");
            }
        }
        if !q.plan.is_empty() {
            say!("--   plan:");
            for line in &q.plan {
                say!("--     {line}");
            }
        }
    }
}

/// Frames a plugin draws, drawn in memory: the plugin's code runs and its
/// answer is validated as `build` would, so a plugin that fails or answers
/// wrongly fails `check` too, at the frame's `draw` line. Nothing is written.
fn try_plugin_frames(planned: &crescendo_plan::Planned) -> Vec<Diagnostic> {
    let host = crate::deck::Host(&planned.plugins);
    let ctx = crate::deck::Context {
        plugins: Some(&host),
        source: Some(&planned.source),
        anchors: Some(&planned.anchors),
    };
    let plan = &planned.plan;
    // one error per `draw` statement, not one per frame of its sequence
    let mut failed = Vec::new();
    let mut errors = Vec::new();
    for (i, f) in plan.frames.iter().enumerate() {
        if !matches!(f.chart, crescendo_plan::model::Chart::Plugin(_)) {
            continue;
        }
        let chart = planned.anchors.frames.get(i).map(|a| a.chart.clone());
        if failed.contains(&chart) {
            continue;
        }
        if let Err(e) = crescendo_render::display_list(plan, f, ctx.plugins) {
            errors.push(crate::deck::frame_error(f, i, &e, &ctx));
            failed.push(chart);
        }
    }
    errors
}
