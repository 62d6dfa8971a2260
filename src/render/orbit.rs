//! The orbit itself, in its domain.
//!
//! - n ≤ 2: the points of the domain (the box, or the point set) as small
//!   grey dots, the orbit points as numbered nodes, and an arrow from each
//!   `x_i` to `x_{i+1}`: the map's action on the orbit. For n = 1 the second
//!   axis is left out.
//! - n ≥ 3: parallel coordinates. Coordinate `c` is a vertical axis with the
//!   values of the box as ticks; point `x_i` is a polyline through
//!   `(c, x_{i,c})`, labelled `i` at both ends and drawn with a dash pattern
//!   of its own. Integer points share many segments, so line `i` is shifted
//!   by a few pixels (the same shift on every axis; the subtitle says how far).
//!
//! Elements for machines: one `<g class="point" data-i data-x>` per orbit
//! point in both layouts.

use super::facts::OrbitFacts;
use super::svg::{DASHES, FONT, GREY, Svg, a, an, label_every, text_width};

/// Line colours of the parallel coordinates (Okabe and Ito's palette without
/// its yellow, dark enough on white); with the dash patterns they tell 35
/// lines apart, and the end labels name every line in any case.
const INKS: [&str; 7] = [
    "#000000", "#0072b2", "#d55e00", "#009e73", "#cc79a7", "#e69f00", "#56b4e9",
];

/// Radius of an orbit node in the plane layout.
const NODE: f64 = 10.0;

/// The SVG picture; `what` names the domain, `domain` lists its points when
/// it is a point set.
pub fn orbit(o: &OrbitFacts, what: &str, domain: Option<&[Vec<i64>]>) -> String {
    if o.bounds.len() <= 2 {
        plane(o, what, domain)
    } else {
        parallel(o, what)
    }
}

fn plane(o: &OrbitFacts, what: &str, domain: Option<&[Vec<i64>]>) -> String {
    let p = o.period();
    let (lo1, hi1) = o.bounds[0];
    let (lo2, hi2) = o.bounds.get(1).copied().unwrap_or((0, 0));
    let (s1, s2) = ((hi1 - lo1) as f64, (hi2 - lo2) as f64);
    // Up to 90 px per unit; a long side shrinks the step, so the picture stays
    // within about 560 px whatever the box.
    let step = (560.0 / s1.max(s2).max(1.0)).min(90.0);
    let (left, top) = (70.0, 70.0);
    let width = left + s1 * step + 60.0;
    let height = top + s2 * step + 70.0;
    let x_of = |v: i64| left + (v - lo1) as f64 * step;
    // The second coordinate grows upwards, as in the plane.
    let y_of = |v: i64| top + (hi2 - v) as f64 * step;
    let at = |z: &[i64]| (x_of(z[0]), y_of(z.get(1).copied().unwrap_or(0)));
    let title = format!("The orbit of period {p} in {what}");
    let desc = format!(
        "The points of the domain as dots, the {p} orbit points numbered in orbit order, \
         an arrow from each x_i to x_(i+1)."
    );
    let headline = format!("The orbit x_0, …, x_{} in {what}", p - 1);
    let width = width.max(300.0).max(text_width(&headline) * 1.1 + 40.0);
    let mut s = Svg::new(width, height, "orbit", &title, &desc);
    s.defs();
    s.headline(width / 2.0, &headline, "arrows: x_i ↦ x_(i+1) = f(x_i)");
    // Axes with ticks.
    let every1 = label_every(step);
    let base = y_of(lo2) + 24.0;
    s.open("g", &[a("class", "axis"), a("data-axis", "1")]);
    for v in (lo1..=hi1).step_by(every1) {
        s.label_with(
            x_of(v),
            base,
            "middle",
            &v.to_string(),
            &[a("class", "tick")],
        );
    }
    s.label(
        left + s1 * step / 2.0,
        base + 22.0,
        "middle",
        "x_1 (coordinate 1)",
    );
    s.close();
    if o.bounds.len() == 2 {
        let every2 = label_every(step);
        s.open("g", &[a("class", "axis"), a("data-axis", "2")]);
        for v in (lo2..=hi2).step_by(every2) {
            s.label_with(
                left - 22.0,
                y_of(v) + FONT / 3.0,
                "end",
                &v.to_string(),
                &[a("class", "tick")],
            );
        }
        s.label_with(
            left - 50.0,
            top + s2 * step / 2.0,
            "middle",
            "x_2",
            &[a(
                "transform",
                format!(
                    "rotate(-90 {} {})",
                    super::svg::num(left - 50.0),
                    super::svg::num(top + s2 * step / 2.0)
                ),
            )],
        );
        s.close();
    }
    // The domain's points.
    s.open("g", &[a("class", "domain")]);
    let dot = |s: &mut Svg, z: &[i64]| {
        let (x, y) = at(z);
        s.empty(
            "circle",
            &[an("cx", x), an("cy", y), a("r", "2.5"), a("fill", GREY)],
        );
    };
    match domain {
        Some(points) => points.iter().for_each(|z| dot(&mut s, z)),
        None if (s1 + 1.0) * (s2 + 1.0) <= 10_000.0 => {
            for u in lo1..=hi1 {
                for v in lo2..=hi2 {
                    dot(&mut s, &[u, v]);
                }
            }
        }
        None => {}
    }
    s.close();
    // Arrows x_i → x_{i+1}, stopped short of the nodes.
    s.open("g", &[a("class", "arrows")]);
    for i in 0..p {
        if p == 1 {
            break;
        }
        let ((x1, y1), (x2, y2)) = (at(&o.orbit[i]), at(&o.orbit[(i + 1) % p]));
        let len = ((x2 - x1).powi(2) + (y2 - y1).powi(2)).sqrt().max(1.0);
        let (ux, uy) = ((x2 - x1) / len, (y2 - y1) / len);
        // A slight bend keeps the arrows of a 2-cycle apart.
        let (mx, my) = ((x1 + x2) / 2.0 - uy * 10.0, (y1 + y2) / 2.0 + ux * 10.0);
        let d = format!(
            "M {} {} Q {} {} {} {}",
            super::svg::num(x1 + ux * NODE),
            super::svg::num(y1 + uy * NODE),
            super::svg::num(mx),
            super::svg::num(my),
            super::svg::num(x2 - ux * (NODE + 1.0)),
            super::svg::num(y2 - uy * (NODE + 1.0))
        );
        s.empty(
            "path",
            &[
                a("class", "arrow"),
                a("data-i", i.to_string()),
                a("d", d),
                a("fill", "none"),
                a("stroke", "black"),
                a("stroke-width", "1.3"),
                a("marker-end", s.url("arrow")),
            ],
        );
    }
    s.close();
    s.open("g", &[a("class", "points")]);
    for (i, z) in o.orbit.iter().enumerate() {
        let (x, y) = at(z);
        s.open_point("point", i, z);
        s.empty(
            "circle",
            &[
                an("cx", x),
                an("cy", y),
                an("r", NODE),
                a("fill", "white"),
                a("stroke", "black"),
                a("stroke-width", "1.5"),
            ],
        );
        s.label(x, y + FONT / 3.0, "middle", &i.to_string());
        s.close();
    }
    s.close();
    s.finish()
}

fn parallel(o: &OrbitFacts, what: &str) -> String {
    let p = o.period();
    let n = o.bounds.len();
    let lo = o.bounds.iter().map(|b| b.0).min().unwrap_or(0);
    let hi = o.bounds.iter().map(|b| b.1).max().unwrap_or(0);
    let span = (hi - lo).max(1) as f64;
    let (left, top) = (90.0, 80.0);
    let gap = (600.0 / (n - 1) as f64).clamp(90.0, 220.0);
    // Room for the end labels of the points that share a value (11 px each).
    let crowd = (0..n)
        .flat_map(|c| o.orbit.iter().map(move |z| (c, z[c])))
        .map(|(c, v)| o.orbit.iter().filter(|z| z[c] == v).count())
        .max()
        .unwrap_or(1) as f64;
    let unit = (11.0 * crowd + 24.0).max(110.0);
    let plot_h = (span * unit).clamp(180.0, 900.0);
    let width = left + gap * (n - 1) as f64 + 90.0;
    let height = top + plot_h + 80.0;
    let x_of = |c: usize| left + gap * c as f64;
    // Line i is shifted by shift(i), spread evenly over ±spread, so that
    // segments shared by several points stay apart.
    let spread = (plot_h / span * 0.12).clamp(3.0, 14.0);
    let shift = |i: usize| {
        if p == 1 {
            0.0
        } else {
            -spread + 2.0 * spread * i as f64 / (p - 1) as f64
        }
    };
    let base = |v: i64| top + (hi - v) as f64 / span * plot_h;
    let y_of = |v: i64, i: usize| base(v) + shift(i);
    let title = format!("The orbit of period {p} in {what}, in parallel coordinates");
    let words = format!("lines shifted ≤ {spread:.0} px apart");
    let desc = format!(
        "One vertical axis per coordinate (1 to {n}); point x_i is the polyline through its \
         coordinates, labelled i at both ends; {words}, so that shared segments stay apart."
    );
    let mut s = Svg::new(width, height, "orbit", &title, &desc);
    s.headline(
        width / 2.0,
        &format!("The orbit x_0, …, x_{} in {what}", p - 1),
        &format!("parallel coordinates: one polyline per point x_i ({words})"),
    );
    s.open("g", &[a("class", "axes")]);
    let every = label_every(plot_h / span);
    for (c, &(a_c, b_c)) in o.bounds.iter().enumerate() {
        let x = x_of(c);
        s.line(
            (x, base(b_c) - spread - 8.0),
            (x, base(a_c) + spread + 8.0),
            &[
                a("class", "axis"),
                a("data-axis", (c + 1).to_string()),
                a("stroke", "black"),
            ],
        );
        for v in (a_c..=b_c).step_by(every) {
            let y = base(v);
            s.line((x - 4.0, y), (x + 4.0, y), &[a("stroke", "black")]);
            s.label_with(
                x + 6.0,
                y - spread - 3.0,
                "start",
                &v.to_string(),
                &[a("class", "tick"), a("font-size", "10")],
            );
        }
        s.label(x, top + plot_h + 40.0, "middle", &format!("x_{}", c + 1));
    }
    s.label(width / 2.0, top + plot_h + 62.0, "middle", "coordinate c");
    s.close();
    s.open("g", &[a("class", "points")]);
    for (i, z) in o.orbit.iter().enumerate() {
        let pts: Vec<String> = z
            .iter()
            .enumerate()
            .map(|(c, &v)| {
                format!(
                    "{},{}",
                    super::svg::num(x_of(c)),
                    super::svg::num(y_of(v, i))
                )
            })
            .collect();
        s.open_point("point", i, z);
        s.empty(
            "polyline",
            &[
                a("points", pts.join(" ")),
                a("fill", "none"),
                a("stroke", INKS[i % INKS.len()]),
                a("stroke-width", "1.4"),
                a("stroke-dasharray", DASHES[i % DASHES.len()]),
            ],
        );
        for (c, &v) in z.iter().enumerate() {
            s.empty(
                "circle",
                &[
                    an("cx", x_of(c)),
                    an("cy", y_of(v, i)),
                    a("r", "2.2"),
                    a("fill", "black"),
                ],
            );
        }
        // Labels at both ends, stacked 11 px apart among the points that
        // share the end value, each tied to its line by a thin leader.
        for (c, dx, anchor) in [(0, -40.0, "end"), (n - 1, 40.0, "start")] {
            let v = z[c];
            let group: Vec<usize> = (0..p).filter(|&j| o.orbit[j][c] == v).collect();
            let rank = group.iter().position(|&j| j == i).unwrap_or(0) as f64;
            let ly = base(v) + FONT / 3.0 + (rank - (group.len() - 1) as f64 / 2.0) * 11.0;
            let (ex, ey) = (x_of(c), y_of(v, i));
            let lx = ex + dx;
            s.line(
                (ex, ey),
                (lx - dx.signum() * 3.0, ly - 3.0),
                &[a("stroke", GREY), a("stroke-width", "0.5")],
            );
            s.label_with(
                lx,
                ly,
                anchor,
                &i.to_string(),
                &[a("font-size", "10"), a("fill", INKS[i % INKS.len()])],
            );
        }
        s.close();
    }
    s.close();
    s.finish()
}
