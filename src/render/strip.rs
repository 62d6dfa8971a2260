//! A spectrum as a strip: which periods occur on a domain.
//!
//! One band per domain (a store may hold several), with the period p on the
//! horizontal axis. Each swept period has a marker whose *shape* says the
//! verdict (colour repeats it): a filled circle for feasible, a cross for
//! infeasible, a cross in a dashed ring for an infeasible verdict that rests
//! on a claim no checker accepted, an open square with "?" for unknown.
//! Vertical lines mark the construction's reach (`2^n'`, nonexpansive) and
//! the Lemmens–Scheutzow bound `max_k 2^k·C(n',k)` (topical maps:
//! `C(n', ⌊n'/2⌋)`, where the two coincide); beyond the bound the band is
//! hatched, as the theorem excludes those periods.
//!
//! Elements for machines: one `<g class="period" data-p data-verdict
//! data-checked>` per swept period, `<line class="bound" data-bound>`.

use super::facts::certificate_words;
use super::input::Spectrum;
use super::svg::{FONT, GREEN, GREY, PURPLE, Svg, a, an, label_every};
use crate::report::Verdict;

/// Height of one domain's band.
const BAND: f64 = 96.0;

/// Periods the axis shows at most.
const AXIS_LIMIT: usize = 4096;

fn axis_end(s: &Spectrum) -> usize {
    let last = s.rows.iter().map(|r| r.period).max().unwrap_or(1);
    let past_bound = usize::try_from(s.bound.saturating_add(1)).unwrap_or(usize::MAX);
    // Show the bound when it is near the swept periods; otherwise the
    // band would be mostly empty (its label then says where it lies).
    let reach = if past_bound <= 2 * last + 8 {
        past_bound
    } else {
        last
    };
    last.max(reach).min(AXIS_LIMIT)
}

/// The SVG picture of the spectra `spectra` (one band each).
pub fn strip(spectra: &[Spectrum]) -> String {
    let axis = spectra.iter().map(axis_end).max().unwrap_or(1).max(1);
    let step = (760.0 / axis as f64).clamp(3.0, 40.0);
    let left = 130.0;
    let top = 58.0;
    let width = left + step * axis as f64 + 50.0;
    let legend_y = top + BAND * spectra.len() as f64 + 26.0;
    let height = legend_y + 6.0 * 18.0 + 4.0;
    let names: Vec<String> = spectra.iter().map(|s| s.question.domain_name()).collect();
    let title = format!("Which periods occur: {}", names.join("; "));
    let desc = "For each period p swept, a marker whose shape gives the verdict: filled circle \
                feasible, cross infeasible, cross in a dashed ring infeasible without a checked \
                proof, square with a question mark unknown. Vertical lines mark 2^n' and the \
                Lemmens–Scheutzow bound; periods beyond the bound are hatched.";
    let mut svg = Svg::new(width.max(560.0), height, "spectrum", &title, desc);
    svg.defs();
    let class_words = match spectra.first().map(|s| s.question.is_topical()) {
        Some(true) => "topical maps",
        _ => "sup-norm nonexpansive maps",
    };
    svg.headline(
        width.max(560.0) / 2.0,
        &format!("Periods of {class_words}"),
        "p on the axis; marker shape = verdict",
    );
    let x_of = |p: f64| left + (p - 0.5) * step;
    for (b, s) in spectra.iter().enumerate() {
        let y0 = top + BAND * b as f64;
        let mid = y0 + BAND / 2.0 + 4.0;
        svg.open(
            "g",
            &[a("class", "band"), a("data-domain", names[b].clone())],
        );
        svg.label_with(
            left - 12.0,
            mid + FONT / 3.0,
            "end",
            &names[b],
            &[a("font-weight", "bold")],
        );
        svg.label_with(
            left - 12.0,
            mid + FONT / 3.0 + 14.0,
            "end",
            &format!("n' = {}", s.question.effective_dim()),
            &[a("font-size", "10")],
        );
        // Hatched region beyond the bound.
        if let Ok(bound) = usize::try_from(s.bound)
            && bound < axis
        {
            let x = x_of(bound as f64 + 0.5);
            svg.empty(
                "rect",
                &[
                    a("class", "excluded"),
                    an("x", x),
                    an("y", mid - 18.0),
                    an("width", left + step * axis as f64 - x),
                    a("height", "36"),
                    a("fill", svg.url("hatch")),
                    a("opacity", "0.6"),
                ],
            );
        }
        // Axis with ticks and labels.
        let axis_y = mid + 24.0;
        svg.line(
            (x_of(0.5), axis_y),
            (x_of(axis as f64 + 0.5), axis_y),
            &[a("stroke", "black")],
        );
        let every = label_every(step);
        for p in 1..=axis {
            let x = x_of(p as f64);
            let long = p % every == 0 || p == 1;
            svg.line(
                (x, axis_y),
                (x, axis_y + if long { 5.0 } else { 2.5 }),
                &[a("stroke", "black")],
            );
            if long {
                svg.label_with(
                    x,
                    axis_y + 17.0,
                    "middle",
                    &p.to_string(),
                    &[a("class", "tick"), a("font-size", "10")],
                );
            }
        }
        svg.label_with(
            x_of(axis as f64 + 0.5) + 6.0,
            axis_y + 4.0,
            "start",
            "p",
            &[a("font-style", "italic")],
        );
        bound_lines(&mut svg, s, axis, (x_of(0.0), step), mid);
        let r = (step * 0.4).clamp(1.5, 7.0);
        for row in &s.rows {
            if row.period == 0 || row.period > axis {
                continue;
            }
            let (_, unchecked) = certificate_words(&row.answer);
            let x = x_of(row.period as f64);
            svg.open(
                "g",
                &[
                    a("class", "period"),
                    a("data-p", row.period.to_string()),
                    a("data-verdict", row.answer.verdict.word()),
                    a("data-checked", if unchecked { "no" } else { "yes" }),
                ],
            );
            svg.text_element(
                "title",
                &[],
                &format!("p = {}: {}", row.period, row.answer.verdict.word()),
            );
            marker(&mut svg, row.answer.verdict, unchecked, x, mid, r);
            svg.close();
        }
        svg.close();
    }
    let topical = spectra.iter().all(|s| s.question.is_topical());
    legend(&mut svg, left, legend_y, topical);
    svg.finish()
}

/// The lines of the construction's reach and of the bound, with labels.
fn bound_lines(svg: &mut Svg, s: &Spectrum, axis: usize, (x0, step): (f64, f64), mid: f64) {
    let n = s.question.effective_dim();
    let lines: Vec<(u128, String, &str)> = if s.question.is_topical() {
        vec![(s.bound, format!("C({n},{}) = {}", n / 2, s.bound), "none")]
    } else if s.construction_limit == s.bound {
        // n' ≤ 2: the construction reaches the bound, one line says both.
        vec![(
            s.bound,
            format!("2^{n} = max_k 2^k·C({n},k) = {}", s.bound),
            "none",
        )]
    } else {
        vec![
            (
                s.construction_limit,
                format!("2^{n} = {}", s.construction_limit),
                "5 3",
            ),
            (s.bound, format!("max_k 2^k·C({n},k) = {}", s.bound), "none"),
        ]
    };
    for (i, (value, text, dash)) in lines.into_iter().enumerate() {
        let y_text = mid - 28.0 - 12.0 * i as f64;
        match usize::try_from(value) {
            Ok(v) if v <= axis => {
                let x = x0 + v as f64 * step;
                svg.line(
                    (x, mid - 24.0 - 12.0 * i as f64),
                    (x, mid + 24.0),
                    &[
                        a("class", "bound"),
                        a("data-bound", value.to_string()),
                        a("stroke", "black"),
                        a("stroke-width", "1.5"),
                        a("stroke-dasharray", dash),
                    ],
                );
                svg.label_with(x + 3.0, y_text, "start", &text, &[a("font-size", "10")]);
            }
            _ => {
                let x = x0 + axis as f64 * step;
                svg.label_with(
                    x,
                    y_text,
                    "end",
                    &format!("{text} (beyond the axis)"),
                    &[a("font-size", "10"), a("class", "bound-note")],
                );
            }
        }
    }
}

fn cross(svg: &mut Svg, x: f64, y: f64, r: f64) {
    for (dx, dy) in [(r, r), (r, -r)] {
        svg.line(
            (x - dx, y - dy),
            (x + dx, y + dy),
            &[a("stroke", PURPLE), a("stroke-width", "2")],
        );
    }
}

fn marker(svg: &mut Svg, v: Verdict, unchecked: bool, x: f64, y: f64, r: f64) {
    match v {
        Verdict::Feasible => {
            svg.empty(
                "circle",
                &[
                    an("cx", x),
                    an("cy", y),
                    an("r", r),
                    a("fill", GREEN),
                    a("stroke", "black"),
                    a("stroke-width", "0.8"),
                ],
            );
        }
        Verdict::Infeasible => {
            cross(svg, x, y, r * 0.8);
            if unchecked {
                svg.empty(
                    "circle",
                    &[
                        an("cx", x),
                        an("cy", y),
                        an("r", r * 1.35),
                        a("fill", "none"),
                        a("stroke", PURPLE),
                        a("stroke-dasharray", "2 2"),
                    ],
                );
            }
        }
        Verdict::Unknown => {
            svg.empty(
                "rect",
                &[
                    an("x", x - r),
                    an("y", y - r),
                    an("width", 2.0 * r),
                    an("height", 2.0 * r),
                    a("fill", "white"),
                    a("stroke", GREY),
                    a("stroke-width", "1.2"),
                ],
            );
            if r >= 5.0 {
                svg.label_with(
                    x,
                    y + r * 0.6,
                    "middle",
                    "?",
                    &[a("font-size", super::svg::num(r * 1.6)), a("fill", GREY)],
                );
            }
        }
    }
}

fn legend(svg: &mut Svg, left: f64, y: f64, topical: bool) {
    svg.open("g", &[a("class", "legend")]);
    let items: [(Verdict, bool, &str); 4] = [
        (
            Verdict::Feasible,
            false,
            "feasible: an orbit, checked (by construction or by the solver)",
        ),
        (
            Verdict::Infeasible,
            false,
            "infeasible: an LRAT proof accepted by orbitcnf's checker",
        ),
        (
            Verdict::Infeasible,
            true,
            "infeasible: a solver's claim, no proof checked",
        ),
        (
            Verdict::Unknown,
            false,
            "unknown: no answer within the limits",
        ),
    ];
    for (i, (v, unchecked, words)) in items.into_iter().enumerate() {
        let yy = y + 18.0 * i as f64;
        marker(svg, v, unchecked, left - 100.0, yy - 4.0, 6.0);
        svg.label(left - 86.0, yy, "start", words);
    }
    let (x, y) = (left - 106.0, y + 18.0 * 4.0);
    svg.empty(
        "rect",
        &[
            an("x", x),
            an("y", y - 11.0),
            a("width", "12"),
            a("height", "12"),
            a("fill", svg.url("hatch")),
            a("stroke", GREY),
        ],
    );
    svg.label(
        left - 86.0,
        y,
        "start",
        "periods beyond the Lemmens–Scheutzow bound: excluded by the theorem",
    );
    if topical {
        svg.close();
        return;
    }
    let y = y + 18.0;
    svg.line(
        (x, y - 4.0),
        (x + 12.0, y - 4.0),
        &[
            a("stroke", "black"),
            a("stroke-dasharray", "5 3"),
            a("stroke-width", "1.5"),
        ],
    );
    svg.label(
        left - 86.0,
        y,
        "start",
        "2^n': every period up to it occurs (points of a unit cube)",
    );
    svg.close();
}
