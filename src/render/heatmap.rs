//! The distance matrix of an orbit as a heat map.
//!
//! Cell `(i, j)` (row i, column j) is shaded by `‖x_i − x_j‖∞` (topical
//! orbits: the one-sided `t(x_i, x_j)`), from white for 0 to dark grey for
//! the largest value, and carries the number itself whenever the cell is
//! large enough to hold it, so the picture reads the same in black and
//! white. On an isometric cycle every diagonal `j − i ≡ k (mod p)` is
//! constant: the profile.
//!
//! Elements for machines: one `<rect class="cell" data-i data-j data-d>` per
//! pair.

use super::facts::{Metric, OrbitFacts};
use super::svg::{FONT, Svg, a, an, label_every, text_width};

/// Grey of value `d` on a scale up to `top`: `#ffffff` for 0, `#404040` for `top`.
fn grey(d: i64, top: i64) -> (String, bool) {
    let t = if top <= 0 {
        0.0
    } else {
        (d as f64 / top as f64).clamp(0.0, 1.0)
    };
    let level = (255.0 - t * (255.0 - 64.0)).round() as u8;
    (format!("#{level:02x}{level:02x}{level:02x}"), t > 0.55)
}

/// The SVG picture; `what` names the domain.
pub fn heatmap(o: &OrbitFacts, what: &str) -> String {
    let p = o.period();
    let cell = (420.0 / p as f64).clamp(6.0, 30.0);
    let left = 70.0;
    let top_margin = 84.0;
    let side = cell * p as f64;
    let legend_y = top_margin + side + 34.0;
    let height = legend_y + 40.0;
    let (quantity, name) = match o.metric {
        Metric::Sup => ("‖x_i − x_j‖∞", "sup-norm distances"),
        Metric::Topical => ("t(x_i, x_j) = max_c (x_i,c − x_j,c)", "one-sided distances"),
    };
    let top = o.matrix.iter().flatten().copied().max().unwrap_or(0);
    let bottom = o.matrix.iter().flatten().copied().min().unwrap_or(0);
    let headline = format!("Distances on the {p}-cycle in {what}");
    let subtitle = format!("cell (i, j): {quantity}");
    let values = {
        let mut v: Vec<i64> = o.matrix.iter().flatten().copied().collect();
        v.sort_unstable();
        v.dedup();
        v.len()
    };
    let width = (left + side + 40.0)
        .max(text_width(&headline) * 1.1 + 40.0)
        .max(text_width(&subtitle) + 40.0)
        .max(left + 60.0 + 44.0 * values as f64);
    let title = format!("The {name} of the {p}-cycle in {what}");
    let desc =
        format!("A {p} by {p} matrix; cell (i, j) holds {quantity}, from {bottom} to {top}.");
    let mut s = Svg::new(width, height, "distances", &title, &desc);
    s.headline(width / 2.0, &headline, &subtitle);
    let every = label_every(cell);
    // Column axis on top, row axis on the left.
    s.label(left + side / 2.0, top_margin - 24.0, "middle", "j");
    s.label(left - 40.0, top_margin + side / 2.0, "middle", "i");
    for i in (0..p).filter(|i| i % every == 0) {
        let c = left + (i as f64 + 0.5) * cell;
        s.label_with(
            c,
            top_margin - 6.0,
            "middle",
            &i.to_string(),
            &[a("class", "tick")],
        );
        let r = top_margin + (i as f64 + 0.5) * cell + FONT / 3.0;
        s.label_with(left - 8.0, r, "end", &i.to_string(), &[a("class", "tick")]);
    }
    let numbers = cell >= 14.0;
    s.open("g", &[a("class", "cells")]);
    for (i, row) in o.matrix.iter().enumerate() {
        for (j, &d) in row.iter().enumerate() {
            let (x, y) = (left + j as f64 * cell, top_margin + i as f64 * cell);
            let (fill, dark) = grey(d, top);
            s.open(
                "rect",
                &[
                    a("class", "cell"),
                    a("data-i", i.to_string()),
                    a("data-j", j.to_string()),
                    a("data-d", d.to_string()),
                    an("x", x),
                    an("y", y),
                    an("width", cell),
                    an("height", cell),
                    a("fill", fill),
                    a("stroke", "#999999"),
                    a("stroke-width", "0.5"),
                ],
            );
            s.text_element("title", &[], &format!("i = {i}, j = {j}: {d}"));
            s.close();
            if numbers {
                let ink = if dark { "white" } else { "black" };
                s.label_with(
                    x + cell / 2.0,
                    y + cell / 2.0 + FONT / 3.0,
                    "middle",
                    &d.to_string(),
                    &[a("fill", ink), a("class", "value")],
                );
            }
        }
    }
    s.close();
    // Legend: one swatch per value that occurs.
    let mut seen: Vec<i64> = o.matrix.iter().flatten().copied().collect();
    seen.sort_unstable();
    seen.dedup();
    s.open("g", &[a("class", "legend")]);
    s.label(left, legend_y, "start", "value:");
    for (n, &d) in seen.iter().enumerate() {
        let x = left + 50.0 + 44.0 * n as f64;
        let (fill, dark) = grey(d, top);
        s.empty(
            "rect",
            &[
                an("x", x),
                an("y", legend_y - 13.0),
                a("width", "18"),
                a("height", "18"),
                a("fill", fill),
                a("stroke", "black"),
                a("stroke-width", "0.5"),
            ],
        );
        let ink = if dark { "white" } else { "black" };
        s.label_with(
            x + 9.0,
            legend_y + 1.0,
            "middle",
            &d.to_string(),
            &[a("fill", ink)],
        );
    }
    s.close();
    s.finish()
}
