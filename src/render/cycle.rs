//! The orbit as a cycle graph: the circulant graph of its distance profile.
//!
//! The p points sit on a circle in orbit order, `x_0` at the top and the
//! orbit running clockwise. Every pair `{i, i+k}` is joined by a chord drawn
//! in the style of its distance `g(k) = ‖x_i − x_{i+k}‖∞`, which does not
//! depend on `i` on an isometric cycle, so each style class is a circulant
//! graph. Offsets at the orbit's diameter are *far* (thin, dashed), the
//! others *close* (solid, heavier; a second close value gets a dash pattern
//! of its own). The legend lists each distance with its offsets.
//!
//! Elements for machines: one `<g class="node" data-i data-x>` per orbit
//! point, one `<line class="edge close|far" data-i data-j data-k data-d>`
//! per pair.

use super::facts::OrbitFacts;
use super::svg::{DASHES, FONT, GREY, Svg, a, an, point_words, text_width};

/// Radius of a node circle.
const NODE: f64 = 11.0;

/// The SVG picture; `what` names the domain (`{-1,0,1}^3`).
pub fn cycle(o: &OrbitFacts, what: &str) -> String {
    let p = o.period();
    let radius = (40.0 + 14.0 * p as f64).clamp(90.0, 230.0);
    let headline = format!("Isometric {p}-cycle in {what}");
    let subtitle = "chord {x_i, x_(i+k)} styled by ‖x_i − x_(i+k)‖∞ = g(k)";
    let width = (2.0 * radius + 160.0)
        .max(text_width(&headline) * 1.1 + 40.0)
        .max(text_width(subtitle) + 40.0);
    let cx = width / 2.0;
    let cy = radius + 84.0;
    let mut values: Vec<i64> = o.profile.clone();
    values.sort_unstable();
    values.dedup();
    let top = o.diameter();
    let legend_top = cy + radius + 40.0;
    let height = legend_top + 18.0 * values.len().max(1) as f64 + 20.0;
    let title = format!(
        "The {p}-cycle of the orbit in {what}: the circulant graph of its distance profile"
    );
    let desc = format!(
        "{p} points on a circle in orbit order; a chord joins x_i and x_(i+k) in the style of \
         their distance; profile {:?}",
        o.profile
    );
    let mut s = Svg::new(width, height, "cycle", &title, &desc);
    s.headline(cx, &headline, subtitle);
    let at = |i: usize| {
        let t = std::f64::consts::TAU * i as f64 / p as f64;
        (cx + radius * t.sin(), cy - radius * t.cos())
    };
    let style = |d: i64| -> (String, &'static str, f64, &'static str) {
        if d == top && values.len() > 1 || values.len() == 1 {
            // All at the diameter (or the only value): far.
            ("far".into(), GREY, 1.0, DASHES[1])
        } else {
            let rank = values.iter().position(|&v| v == d).unwrap_or(0);
            let dash = if rank == 0 {
                DASHES[0]
            } else {
                DASHES[2 + (rank - 1) % 3]
            };
            ("close".into(), "black", 2.2, dash)
        }
    };
    s.open("g", &[a("class", "edges")]);
    for k in 1..=p / 2 {
        let d = o.profile[k - 1];
        let (kind, colour, w, dash) = style(d);
        // For k = p/2 the chord {i, i+k} is the chord {i+k, i}: draw it once.
        let count = if 2 * k == p { p / 2 } else { p };
        for i in 0..count {
            let j = (i + k) % p;
            s.line(
                at(i),
                at(j),
                &[
                    a("class", format!("edge {kind}")),
                    a("data-i", i.to_string()),
                    a("data-j", j.to_string()),
                    a("data-k", k.to_string()),
                    a("data-d", d.to_string()),
                    a("stroke", colour),
                    an("stroke-width", w),
                    a("stroke-dasharray", dash),
                ],
            );
        }
    }
    s.close();
    s.open("g", &[a("class", "nodes")]);
    for (i, x) in o.orbit.iter().enumerate() {
        let (x0, y0) = at(i);
        s.open_point("node", i, x);
        s.empty(
            "circle",
            &[
                an("cx", x0),
                an("cy", y0),
                an("r", NODE),
                a("fill", "white"),
                a("stroke", "black"),
                a("stroke-width", "1.5"),
            ],
        );
        s.label(x0, y0 + FONT / 3.0, "middle", &i.to_string());
        // The point's coordinates outside the circle, away from the centre.
        let (dx, dy) = (x0 - cx, y0 - cy);
        let len = (dx * dx + dy * dy).sqrt().max(1.0);
        let (lx, ly) = (
            x0 + dx / len * (NODE + 8.0),
            y0 + dy / len * (NODE + 8.0) + FONT / 3.0,
        );
        let anchor = if dx > 1.0 {
            "start"
        } else if dx < -1.0 {
            "end"
        } else {
            "middle"
        };
        let ly = if dx.abs() <= 1.0 && dy > 0.0 {
            ly + 4.0
        } else {
            ly
        };
        s.label_with(
            lx,
            ly,
            anchor,
            &point_words(x),
            &[a("font-size", "10"), a("class", "coords")],
        );
        s.close();
    }
    s.close();
    // Legend: one line per distance value, largest first.
    s.open("g", &[a("class", "legend")]);
    if values.is_empty() {
        s.label(20.0, legend_top, "start", "p = 1: a fixed point, no chords");
    }
    for (row, &d) in values.iter().rev().enumerate() {
        let y = legend_top + 18.0 * row as f64;
        let (kind, colour, w, dash) = style(d);
        s.line(
            (20.0, y - 4.0),
            (60.0, y - 4.0),
            &[
                a("stroke", colour),
                an("stroke-width", w),
                a("stroke-dasharray", dash),
            ],
        );
        let offsets: Vec<String> = (1..=o.profile.len())
            .filter(|&k| o.profile[k - 1] == d)
            .map(|k| k.to_string())
            .collect();
        s.label(
            68.0,
            y,
            "start",
            &format!("{kind}: g(k) = {d} for k ∈ {{{}}}", offsets.join(", ")),
        );
    }
    s.close();
    s.finish()
}
