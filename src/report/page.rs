//! The HTML page: header, plots, tables and the record, with inline
//! styles. Everything a reader sees is escaped here.
//!
//! Invariants: the page loads nothing (no link, script, image or font
//! reference); light colours and the reader's sans-serif; the same context
//! gives the same bytes.

use serde_json::Value;

use crate::analysis::{Analysis, Comparison, number};
use crate::ledger::{Entry, timestamp_text};

use plotters::style::RGBColor;

use super::plots::{Key, Plot, Swatch};
use super::write::Context;

const STYLE: &str = include_str!("style.css");

/// `text` with the five XML specials escaped.
pub fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '&' => out.push_str("&amp;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            other => out.push(other),
        }
    }
    out
}

fn opt(v: Option<f64>) -> String {
    v.map_or_else(|| "\u{2013}".into(), number)
}

/// A number for a table column: three decimals always (a rounding residue
/// such as 1e-17 reads as 0.000), and no negative zero.
fn fixed(x: f64) -> String {
    let text = format!("{x:.3}");
    if text == "-0.000" {
        "0.000".into()
    } else {
        text
    }
}

fn opt_fixed(v: Option<f64>) -> String {
    v.map_or_else(|| "\u{2013}".into(), fixed)
}

fn p_value(p: f64) -> String {
    if p < 0.001 {
        "&lt; 0.001".into()
    } else {
        format!("{p:.3}")
    }
}

fn short(hash: &str) -> String {
    hash.chars().take(12).collect()
}

/// The whole page.
pub(super) fn render(c: &Context) -> String {
    let mut page = String::with_capacity(64 * 1024);
    page.push_str(&format!(
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n\
         <meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n\
         <title>holdfast report: {}</title>\n<style>\n{STYLE}</style>\n</head>\n<body>\n<main>\n",
        escape(&c.plan_name)
    ));
    header(&mut page, c);
    curves(&mut page, c);
    splits(&mut page, c);
    comparisons(&mut page, &c.analysis);
    bootstrap(&mut page, &c.analysis);
    exact_632(&mut page, c);
    folds(&mut page, c);
    openings(&mut page, c);
    record(&mut page, c);
    page.push_str("</main>\n</body>\n</html>\n");
    page
}

fn fact(page: &mut String, name: &str, value: &str) {
    page.push_str(&format!("<dt>{}</dt><dd>{value}</dd>\n", escape(name)));
}

fn header(page: &mut String, c: &Context) {
    let a = &c.analysis;
    let direction = if a.larger_is_better {
        "higher is better"
    } else {
        "lower is better"
    };
    let se = a
        .chosen
        .se
        .map(|s| format!(" &plusmn; {} (SE)", number(s)))
        .unwrap_or_default();
    page.push_str(&format!(
        "<header>\n<p class=\"kicker\">holdfast report &middot; selection entry {} &middot; {}</p>\n\
         <h1>{}</h1>\n<p class=\"lede\">The <b>{}</b> rule on <b>{}</b> ({direction}) chose \
         <b class=\"chosen-name\">{}</b>: cross-validation mean <b>{}</b>{se} over {} outer splits ({}).</p>\n",
        c.selection.seq,
        escape(&timestamp_text(&c.selection.timestamp)),
        escape(&c.plan_name),
        escape(&a.rule),
        escape(&a.metric),
        escape(&a.chosen.label),
        opt(a.chosen.mean),
        a.outer_splits.len(),
        escape(&a.scheme),
    ));
    if let Some(o) = &c.opening {
        opening_notice(page, o);
    }
    page.push_str("<dl class=\"facts\">\n");
    fact(page, "candidates", &format!("{} eligible", a.eligible));
    if a.best.id != a.chosen.id {
        fact(
            page,
            "best mean",
            &format!("{} ({})", escape(&a.best.label), opt(a.best.mean)),
        );
    }
    if let Some(b) = &a.baseline {
        fact(
            page,
            "baseline",
            &format!("{} (mean {})", escape(&b.label), opt(b.mean)),
        );
    }
    if let Some(b) = &a.one_se_band {
        fact(
            page,
            "one-SE band",
            &format!("{} to {}", number(b.low), number(b.high)),
        );
    }
    let rows = |k: &str| c.selection.body.get(k).and_then(Value::as_u64).unwrap_or(0);
    fact(
        page,
        "rows",
        &format!(
            "{} development, {} sealed",
            rows("development_rows"),
            rows("sealed_rows")
        ),
    );
    page.push_str("</dl>\n");
    page.push_str(&format!(
        "<p class=\"optimism\">{}</p>\n",
        escape(&capital(&a.optimism.sentence))
    ));
    if let Some(n) = &a.optimism.nested_note {
        page.push_str(&format!("<p class=\"note\">{}.</p>\n", escape(&capital(n))));
    }
    page.push_str("</header>\n");
}

fn capital(text: &str) -> String {
    let mut chars = text.chars();
    chars
        .next()
        .map_or_else(String::new, |f| f.to_uppercase().chain(chars).collect())
}

fn opening_notice(page: &mut String, o: &Entry) {
    let b = crate::exec::hashed_part(&o.body);
    let score = b.get("score").and_then(Value::as_f64);
    let iv = interval_text(b.get("interval"));
    page.push_str(&format!(
        "<p class=\"notice opening-mark\">This report was asked for <b>opening entry {}</b>: on {} \
         {} opened the sealed partition for this selection and scored the chosen candidate {} {} \
         (95% interval {}). The analysis below is of the selection; the opening is marked in the \
         openings table.</p>\n",
        o.seq,
        escape(&timestamp_text(&o.timestamp)),
        escape(&format!("{}@{}", o.provenance.user, o.provenance.host)),
        escape(b.get("metric").and_then(Value::as_str).unwrap_or_default()),
        opt(score),
        iv
    ));
}

fn interval_text(v: Option<&Value>) -> String {
    let get = |k: &str| v.and_then(|i| i.get(k)).and_then(Value::as_f64);
    match (get("low"), get("high")) {
        (Some(l), Some(h)) => format!("{} to {}", number(l), number(h)),
        _ => "\u{2013}".into(),
    }
}

/// The key of a plot as an HTML list with CSS swatches.
fn legend(keys: &[Key]) -> String {
    let items: Vec<String> = keys
        .iter()
        .map(|k| {
            let RGBColor(r, g, b) = k.colour;
            let colour = format!("rgba({r},{g},{b},{})", k.opacity);
            let (class, style) = match k.swatch {
                Swatch::Dot => ("dot", format!("background:{colour}")),
                Swatch::Block => ("block", format!("background:{colour}")),
                Swatch::Ring => ("ring", format!("border-color:{colour}")),
                Swatch::Line => ("line", format!("border-color:{colour}")),
                Swatch::Dashed => ("dashed", format!("border-color:{colour}")),
            };
            format!(
                "<li><span class=\"swatch {class}\" style=\"{style}\"></span>{}</li>",
                escape(&k.text)
            )
        })
        .collect();
    format!("<ul class=\"key\">{}</ul>\n", items.join(""))
}

fn figure(page: &mut String, plot: &Plot) {
    page.push_str(&format!(
        "<figure>\n<figcaption>{}</figcaption>\n{}{}</figure>\n",
        escape(&plot.title),
        plot.svg,
        legend(&plot.legend)
    ));
}

fn curves(page: &mut String, c: &Context) {
    let a = &c.analysis;
    page.push_str("<section id=\"curves\">\n<h2>Validation curves</h2>\n");
    page.push_str(
        "<p>One plot per learner, its candidates ordered from the simplest setting (left) to the \
         most complex (right). Filled dots on solid lines are validation means with &plusmn;1 \
         standard error bars; hollow dots on dashed lines are means on the training parts. Where \
         both are poor the learner under-fits; where the training mean keeps improving while the \
         validation mean falls away, it over-fits. The ring marks the chosen candidate.</p>\n",
    );
    if a.one_se_band.is_some() {
        page.push_str("<p>The shaded band is the best mean &plusmn; one standard error: the one-standard-error rule takes the simplest candidate of the best learner inside it.</p>\n");
    }
    for p in &c.curves {
        figure(page, p);
    }
    if c.curves.is_empty() {
        page.push_str("<p class=\"note\">No learner of this plan has a complexity setting to draw a curve over.</p>\n");
    }
    if !a.left_out.is_empty() {
        page.push_str("<details><summary>Not on any curve</summary><ul>\n");
        for l in &a.left_out {
            let who = l.label.clone().unwrap_or_else(|| l.learner.clone());
            page.push_str(&format!(
                "<li>{}: {}</li>\n",
                escape(&who),
                escape(&l.reason)
            ));
        }
        page.push_str("</ul></details>\n");
    }
    page.push_str("</section>\n");
}

fn splits(page: &mut String, c: &Context) {
    page.push_str("<section id=\"splits\">\n<h2>Scores per split</h2>\n");
    page.push_str(
        "<p>The best candidates by mean, the chosen one and the baseline: one dot per outer split, \
         a black bar at the mean. Grey lines join the dots of one split: candidates are scored on \
         the same splits, so what matters is whether one stays ahead split by split.</p>\n",
    );
    figure(page, &c.splits);
    page.push_str("</section>\n");
}

fn verdict(x: &Comparison) -> (String, &'static str) {
    match (x.distinguishable, &x.undefined) {
        (Some(true), _) => ("distinguishable".into(), "distinct"),
        (Some(false), _) => ("\u{2248} not distinguishable".into(), "indistinct"),
        (None, Some(why)) => (format!("no test: {why}"), "undefined"),
        (None, None) => ("no test".into(), "undefined"),
    }
}

fn comparisons(page: &mut String, a: &Analysis) {
    page.push_str("<section id=\"comparisons\">\n<h2>Compared with the chosen candidate</h2>\n");
    page.push_str(&format!(
        "<p>Difference = chosen minus other, per outer split, averaged; {}; 95% interval; \
         two-sided p. Rows marked &asymp; are not distinguishable from the chosen candidate at \
         p &lt; 0.05 (each comparison on its own, not adjusted for how many there are).</p>\n",
        escape(&a.test.description)
    ));
    page.push_str(
        "<table class=\"comparisons\">\n<thead><tr><th>candidate</th><th>mean</th>\
         <th>difference</th><th>95% interval</th><th>p</th><th>verdict</th></tr></thead>\n<tbody>\n",
    );
    for x in &a.comparisons {
        let (text, class) = verdict(x);
        let class = if x.reference {
            format!("{class} baseline")
        } else {
            class.to_string()
        };
        let iv = x.interval.as_ref().map_or("\u{2013}".into(), |i| {
            format!("{} to {}", fixed(i.low), fixed(i.high))
        });
        let tag = if x.reference {
            " <span class=\"tag\">baseline</span>"
        } else if x.best {
            " <span class=\"tag\">best mean</span>"
        } else {
            ""
        };
        page.push_str(&format!(
            "<tr class=\"{class}\"><td>{}{tag}</td><td>{}</td><td>{}</td><td>{iv}</td><td>{}</td><td>{}</td></tr>\n",
            escape(&x.label),
            opt_fixed(x.mean),
            opt_fixed(x.difference),
            x.p.map_or("\u{2013}".into(), p_value),
            escape(&text)
        ));
    }
    page.push_str("</tbody>\n</table>\n</section>\n");
}

fn bootstrap(page: &mut String, a: &Analysis) {
    let Some(b) = &a.bootstrap else {
        return;
    };
    page.push_str("<section id=\"bootstrap\">\n<h2>Bootstrap estimates of error</h2>\n");
    page.push_str(&format!(
        "<p>On {}. The .632 estimate (Efron 1983) is 0.368 &times; apparent error + 0.632 &times; \
         out-of-bag error. Here {}.</p>\n<p class=\"note\">{}.</p>\n",
        escape(&b.loss),
        escape(&b.note),
        escape(&capital(&b.plus_omitted))
    ));
    page.push_str("<table>\n<thead><tr><th>candidate</th><th>apparent</th><th>out-of-bag</th><th>.632</th></tr></thead>\n<tbody>\n");
    for e in &b.candidates {
        let class = if e.candidate == a.chosen.id {
            " class=\"chosen\""
        } else {
            ""
        };
        page.push_str(&format!(
            "<tr{class}><td>{}</td><td>{}</td><td>{}</td><td>{}</td></tr>\n",
            escape(&e.label),
            number(e.apparent),
            number(e.out_of_bag),
            number(e.err632)
        ));
    }
    page.push_str("</tbody>\n</table>\n</section>\n");
}

fn exact_632(page: &mut String, c: &Context) {
    let Some(exact) = &c.exact else {
        return;
    };
    page.push_str("<section id=\"bootstrap-exact\">\n<h3>.632 and .632+ from refits on all development rows</h3>\n");
    match exact {
        Ok(rows) => {
            page.push_str(
                "<p>Each candidate refitted once on the whole development partition gives the apparent error \
                 (errbar, on those rows) and the no-information rate gamma = sum p<sub>k</sub>(1 - q<sub>k</sub>); \
                 with the recorded out-of-bag error they give .632 and .632+ (Efron and Tibshirani 1997), 0/1 loss.</p>\n",
            );
            page.push_str("<table>\n<thead><tr><th>candidate</th><th>apparent</th><th>out-of-bag</th><th>gamma</th><th>.632</th><th>.632+</th></tr></thead>\n<tbody>\n");
            for e in rows {
                let class = if e.candidate == c.analysis.chosen.id {
                    " class=\"chosen\""
                } else {
                    ""
                };
                page.push_str(&format!(
                    "<tr{class}><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td></tr>\n",
                    escape(&e.label),
                    number(e.apparent),
                    number(e.out_of_bag),
                    number(e.no_information),
                    number(e.err632),
                    number(e.err632_plus)
                ));
            }
            page.push_str("</tbody>\n</table>\n");
        }
        Err(why) => page.push_str(&format!(
            "<p class=\"note omitted\">Left out: {}.</p>\n",
            escape(why)
        )),
    }
    page.push_str("</section>\n");
}

fn folds(page: &mut String, c: &Context) {
    page.push_str("<section id=\"folds\">\n<h2>Fold map</h2>\n");
    match &c.folds {
        Ok(f) => {
            page.push_str(&format!(
                "<p>Rows by outer split: training (blue), validation (orange), sealed (dark, never \
                 given to a learner during selection), unused (pale); {}.</p>\n",
                escape(&f.note)
            ));
            figure(page, &f.plot);
        }
        Err(why) => page.push_str(&format!(
            "<p class=\"note omitted\">The fold map is left out: {}. The selection records split \
             sizes, not row sets, so drawing it needs the data file the selection used.</p>\n",
            escape(why)
        )),
    }
    page.push_str("</section>\n");
}

fn openings(page: &mut String, c: &Context) {
    page.push_str("<section id=\"openings\">\n<h2>Openings of the sealed partition</h2>\n");
    let m = c.openings.len();
    if m == 0 {
        page.push_str("<p>The sealed partition has not been opened: no score on its rows has been looked at.</p>\n</section>\n");
        return;
    }
    page.push_str(&format!(
        "<p>The sealed partition <code>{}</code> has been opened {m} time(s). Each further look \
         makes a score on it less trustworthy; with m openings the Bonferroni level 1 &minus; \
         0.05/m is shown beside the 95% interval.</p>\n",
        escape(&short(&c.selection.partition))
    ));
    page.push_str(
        "<table class=\"openings\">\n<thead><tr><th>#</th><th>entry</th><th>time (UTC)</th><th>by</th>\
         <th>candidate</th><th>score</th><th>95% interval</th><th>Bonferroni</th><th>reason</th></tr></thead>\n<tbody>\n",
    );
    for (i, o) in c.openings.iter().enumerate() {
        opening_row(page, c, i, o);
    }
    page.push_str("</tbody>\n</table>\n</section>\n");
}

fn opening_row(page: &mut String, c: &Context, i: usize, o: &Entry) {
    let b = crate::exec::hashed_part(&o.body);
    let m = b
        .get("openings")
        .and_then(Value::as_u64)
        .unwrap_or(i as u64 + 1);
    let bonf = match (m > 1, b.get("bonferroni")) {
        (true, Some(iv)) if !iv.is_null() => {
            let level = crate::stats::bonferroni_level(m)
                .map_or("\u{2013}".into(), |l| format!("{:.1}%", 100.0 * l));
            format!("{} (level {level})", interval_text(Some(iv)))
        }
        _ => "\u{2013}".into(),
    };
    let marked = c.opening.as_ref().is_some_and(|x| x.seq == o.seq);
    let class = if marked { " class=\"reported\"" } else { "" };
    let text = |k: &str| escape(b.get(k).and_then(Value::as_str).unwrap_or_default());
    page.push_str(&format!(
        "<tr{class}><td>{}</td><td>{}{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{bonf}</td><td>{}</td></tr>\n",
        i + 1,
        o.seq,
        if marked { " <span class=\"tag\">this report</span>" } else { "" },
        escape(&timestamp_text(&o.timestamp)),
        escape(&format!("{}@{}", o.provenance.user, o.provenance.host)),
        text("candidate_label"),
        opt(b.get("score").and_then(Value::as_f64)),
        interval_text(b.get("interval")),
        text("reason"),
    ));
}

fn record(page: &mut String, c: &Context) {
    let s = &c.selection;
    let v = &c.verification;
    page.push_str("<section id=\"record\">\n<h2>Record</h2>\n<dl class=\"record\">\n");
    fact(
        page,
        "plan hash",
        &format!("<code>{}</code>", escape(&s.plan_hash)),
    );
    fact(
        page,
        "data fingerprint",
        &format!("<code>{}</code>", escape(&s.data_file)),
    );
    fact(
        page,
        "sealed partition",
        &format!("<code>{}</code>", escape(&s.partition)),
    );
    fact(
        page,
        "selection entry",
        &format!("{} <code>{}</code>", s.seq, escape(&s.hash)),
    );
    if let Some(o) = &c.opening {
        fact(
            page,
            "opening entry",
            &format!("{} <code>{}</code>", o.seq, escape(&o.hash)),
        );
    }
    let chain = if v.is_intact() {
        format!(
            "<span class=\"ok\">verified</span>: {} entries, head <code>{}</code>",
            v.entries,
            escape(&v.head.clone().unwrap_or_default())
        )
    } else {
        let first = v.first_problem().map(|p| p.to_string()).unwrap_or_default();
        format!(
            "<span class=\"bad\">does not verify</span>: {}",
            escape(&first)
        )
    };
    fact(page, "ledger chain", &chain);
    let p = &s.provenance;
    fact(
        page,
        "run by",
        &escape(&format!(
            "{}@{}, holdfast {}",
            p.user, p.host, p.tool_version
        )),
    );
    fact(page, "plan file", &escape(&p.plan_path));
    if let Some(commit) = &p.git_commit {
        let dirty = if p.git_dirty == Some(true) {
            " (with uncommitted changes)"
        } else {
            ""
        };
        fact(
            page,
            "git commit",
            &format!("<code>{}</code>{dirty}", escape(commit)),
        );
    }
    if let Some(why) = &c.analysis.bootstrap_omitted {
        fact(
            page,
            "bootstrap estimates",
            &escape(&format!("none: {why}")),
        );
    }
    page.push_str("</dl>\n</section>\n");
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn escapes_markup() {
        assert_eq!(
            escape("a<b & \"c\" 'd'>"),
            "a&lt;b &amp; &quot;c&quot; &#39;d&#39;&gt;"
        );
    }

    #[test]
    fn table_numbers_have_three_decimals() {
        assert_eq!(fixed(1.1e-17), "0.000");
        assert_eq!(fixed(-1e-9), "0.000");
        assert_eq!(fixed(-0.0125), "-0.013");
    }

    #[test]
    fn p_values_read_plainly() {
        assert_eq!(p_value(0.0004), "&lt; 0.001");
        assert_eq!(p_value(0.04628), "0.046");
    }
}
