//! `conclusion-missing`: a story that never states its conclusion.

use crescendo_diag::Severity;

use crate::{Finding, Input, Rule};

pub static RULE: Rule = Rule::new("conclusion-missing", Severity::Warning, check);

fn check(input: &Input, out: &mut Vec<Finding>) {
    let plan = input.plan;
    let Some(conclusion) = plan.conclusion.as_deref().filter(|c| !c.trim().is_empty()) else {
        out.push(Finding {
            frame: None,
            span: input
                .anchors
                .title
                .clone()
                .unwrap_or(input.anchors.end.clone()),
            label: "this story states no conclusion".into(),
            message: "the story has no `conclusion`".into(),
            fix: "add `conclusion \"...\"` with the one sentence the deck builds to".into(),
        });
        return;
    };
    let Some(last) = plan.frames.last() else {
        return;
    };
    let norm = |s: &str| s.trim().trim_end_matches('.').to_lowercase();
    let stated = [Some(last.headline.as_str()), last.takeaway.as_deref()]
        .into_iter()
        .flatten()
        .any(|t| norm(t).contains(&norm(conclusion)));
    if !stated {
        let i = plan.frames.len() - 1;
        let span = input
            .anchors
            .frames
            .get(i)
            .map_or(input.anchors.end.clone(), |a| a.headline.clone());
        out.push(Finding {
            frame: Some(i),
            span,
            label: "the last frame".into(),
            message: "the last frame does not state the story's conclusion".into(),
            fix: "add `takeaway \"{conclusion}\"` to the last frame".into(),
        });
    }
}
