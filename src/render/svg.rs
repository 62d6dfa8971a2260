//! The SVG document writer shared by the pictures, and their common parts.
//!
//! Elements are written with [`quick_xml`]'s writer, which escapes every
//! attribute value and text, so no label taken from an input can break the
//! document. Output is deterministic: attributes are written in the order
//! given, numbers go through [`num`] (at most two decimals, no `-0`), and no
//! picture reads a clock, a random source or a hash map's order.
//!
//! Print first: every series is told apart by shape, dash pattern or label
//! as well as by colour, text is black on white, and the fonts are the
//! generic `serif` family, so a picture needs no font file and no network.

use std::borrow::Cow;

use quick_xml::Writer;
use quick_xml::events::{BytesEnd, BytesStart, BytesText, Event};

/// Text size of labels, in pixels.
pub const FONT: f64 = 12.0;

/// Colour of feasible periods (green of a colour-blind-safe diverging pair;
/// the shape says the same).
pub const GREEN: &str = "#1b7837";
/// Colour of infeasible periods (purple of the same pair).
pub const PURPLE: &str = "#762a83";
/// Colour of unknown periods and of secondary lines.
pub const GREY: &str = "#6f6f6f";

/// A number for an attribute: at most two decimals, trailing zeros dropped,
/// never `-0`.
pub fn num(x: f64) -> String {
    let r = (x * 100.0).round() / 100.0;
    if r == 0.0 || !r.is_finite() {
        return "0".into();
    }
    let s = format!("{r:.2}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    s.to_string()
}

/// An SVG document under construction.
pub struct Svg {
    w: Writer<Vec<u8>>,
    open: Vec<String>,
    /// Prefix of every `id` in the document, so that several pictures can
    /// share one HTML page.
    pub prefix: String,
}

type Attrs<'a> = &'a [(&'a str, Cow<'a, str>)];

/// An attribute with an owned or borrowed value.
pub fn a<'a>(name: &'a str, value: impl Into<Cow<'a, str>>) -> (&'a str, Cow<'a, str>) {
    (name, value.into())
}

/// A numeric attribute.
pub fn an(name: &str, value: f64) -> (&str, Cow<'_, str>) {
    (name, Cow::Owned(num(value)))
}

fn start<'a>(name: &'a str, attrs: Attrs<'_>) -> BytesStart<'a> {
    let mut s = BytesStart::new(name);
    for (k, v) in attrs {
        s.push_attribute((*k, v.as_ref()));
    }
    s
}

// Writing into a Vec<u8> cannot fail; an error here is a bug in quick-xml.
const MEMORY: &str = "writing XML to memory cannot fail";

impl Svg {
    /// Starts a picture `width` × `height` pixels with a title and a
    /// description (read by screen readers and shown as a tooltip), and the
    /// `class` naming the picture kind.
    pub fn new(width: f64, height: f64, class: &str, title: &str, desc: &str) -> Svg {
        let mut svg = Svg {
            w: Writer::new_with_indent(Vec::new(), b' ', 1),
            open: Vec::new(),
            prefix: format!("orbitcnf-{class}"),
        };
        let view = format!("0 0 {} {}", num(width), num(height));
        svg.open(
            "svg",
            &[
                a("xmlns", "http://www.w3.org/2000/svg"),
                an("width", width),
                an("height", height),
                a("viewBox", view),
                a("class", format!("orbitcnf {class}")),
                a("role", "img"),
                a("font-family", "serif"),
                an("font-size", FONT),
            ],
        );
        svg.text_element("title", &[], title);
        svg.text_element("desc", &[], desc);
        svg.empty(
            "rect",
            &[
                a("class", "background"),
                an("width", width),
                an("height", height),
                a("fill", "white"),
            ],
        );
        svg
    }

    /// Opens an element; [`Svg::close`] closes it.
    pub fn open(&mut self, name: &str, attrs: Attrs<'_>) {
        self.w
            .write_event(Event::Start(start(name, attrs)))
            .expect(MEMORY);
        self.open.push(name.to_string());
    }

    /// Closes the innermost open element.
    pub fn close(&mut self) {
        if let Some(name) = self.open.pop() {
            self.w
                .write_event(Event::End(BytesEnd::new(name)))
                .expect(MEMORY);
        }
    }

    /// An element without content.
    pub fn empty(&mut self, name: &str, attrs: Attrs<'_>) {
        self.w
            .write_event(Event::Empty(start(name, attrs)))
            .expect(MEMORY);
    }

    /// An element holding text only, written on one line.
    pub fn text_element(&mut self, name: &str, attrs: Attrs<'_>, text: &str) {
        let mut e = self.w.create_element(name);
        for (k, v) in attrs {
            e = e.with_attribute((*k, v.as_ref()));
        }
        e.write_text_content(BytesText::new(&pretty(text)))
            .expect(MEMORY);
    }

    /// A label at `(x, y)` (baseline) anchored `start`, `middle` or `end`.
    pub fn label(&mut self, x: f64, y: f64, anchor: &str, text: &str) {
        self.text_element(
            "text",
            &[an("x", x), an("y", y), a("text-anchor", anchor.to_string())],
            text,
        );
    }

    /// A label with extra attributes (class, size, weight).
    pub fn label_with(&mut self, x: f64, y: f64, anchor: &str, text: &str, extra: Attrs<'_>) {
        let mut attrs = vec![an("x", x), an("y", y), a("text-anchor", anchor.to_string())];
        attrs.extend(extra.iter().cloned());
        self.text_element("text", &attrs, text);
    }

    /// The bold title line and the subtitle line under it, centred at `x`.
    pub fn headline(&mut self, x: f64, title: &str, subtitle: &str) {
        self.label_with(x, 22.0, "middle", title, &[a("font-weight", "bold")]);
        self.label(x, 40.0, "middle", subtitle);
    }

    /// Opens `<g class="CLASS" data-i data-x>` for orbit point `i` at `z`,
    /// with a tooltip; [`Svg::close`] closes it.
    pub fn open_point(&mut self, class: &str, i: usize, z: &[i64]) {
        self.open(
            "g",
            &[
                a("class", class.to_string()),
                a("data-i", i.to_string()),
                a("data-x", point_data(z)),
            ],
        );
        self.text_element("title", &[], &format!("x_{i} = {}", point_words(z)));
    }

    /// A straight line.
    pub fn line(&mut self, (x1, y1): (f64, f64), (x2, y2): (f64, f64), extra: Attrs<'_>) {
        let mut attrs = vec![an("x1", x1), an("y1", y1), an("x2", x2), an("y2", y2)];
        attrs.extend(extra.iter().cloned());
        self.empty("line", &attrs);
    }

    /// Defines, once per document, the hatch pattern `url(#PREFIX-hatch)`
    /// (diagonal lines, for regions a theorem excludes) and the arrow head
    /// `url(#PREFIX-arrow)`.
    pub fn defs(&mut self) {
        let hatch = format!("{}-hatch", self.prefix);
        let arrow = format!("{}-arrow", self.prefix);
        self.open("defs", &[]);
        self.open(
            "pattern",
            &[
                a("id", hatch),
                a("patternUnits", "userSpaceOnUse"),
                a("width", "6"),
                a("height", "6"),
                a("patternTransform", "rotate(45)"),
            ],
        );
        self.line(
            (0.0, 0.0),
            (0.0, 6.0),
            &[a("stroke", GREY), a("stroke-width", "1.2")],
        );
        self.close();
        self.open(
            "marker",
            &[
                a("id", arrow),
                a("viewBox", "0 0 10 10"),
                a("refX", "9"),
                a("refY", "5"),
                a("markerWidth", "7"),
                a("markerHeight", "7"),
                a("orient", "auto"),
            ],
        );
        self.empty(
            "path",
            &[a("d", "M 0 0 L 10 5 L 0 10 z"), a("fill", "black")],
        );
        self.close();
        self.close();
    }

    /// `url(#…)` of a definition made by [`Svg::defs`].
    pub fn url(&self, what: &str) -> String {
        format!("url(#{}-{what})", self.prefix)
    }

    /// The finished document, with an XML declaration and a final newline.
    pub fn finish(mut self) -> String {
        while !self.open.is_empty() {
            self.close();
        }
        let body = String::from_utf8(self.w.into_inner()).expect("quick-xml writes UTF-8");
        format!("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n{body}\n")
    }
}

/// `s` with every `^` followed by digits (or `n`, `k`) written as Unicode
/// superscripts, for labels: `{-1,0,1}^3` becomes `{-1,0,1}³`.
pub fn pretty(s: &str) -> String {
    let sup = |c: char| -> Option<char> {
        Some(match c {
            '0' => '⁰',
            '1' => '¹',
            '2' => '²',
            '3' => '³',
            '4' => '⁴',
            '5' => '⁵',
            '6' => '⁶',
            '7' => '⁷',
            '8' => '⁸',
            '9' => '⁹',
            'n' => 'ⁿ',
            'k' => 'ᵏ',
            _ => return None,
        })
    };
    let mut out = String::with_capacity(s.len());
    let mut chars = s.chars().peekable();
    while let Some(c) = chars.next() {
        if c == '^' && chars.peek().is_some_and(|&d| sup(d).is_some()) {
            while let Some(t) = chars.peek().and_then(|&d| sup(d)) {
                out.push(t);
                chars.next();
            }
        } else {
            out.push(c);
        }
    }
    out
}

/// About how wide `text` is at [`FONT`] in a serif face (bold: add a tenth),
/// for making room: 0.56 em per character.
pub fn text_width(text: &str) -> f64 {
    text.chars().count() as f64 * FONT * 0.56
}

/// Stroke dash patterns, one per series, so lines differ without colour.
pub const DASHES: [&str; 5] = ["none", "6 3", "2 3", "8 3 2 3", "1 5"];

/// How many steps to skip between axis labels so that labels `room` pixels
/// apart do not overlap (labels need about 24 pixels).
pub fn label_every(room: f64) -> usize {
    [1usize, 2, 5, 10, 20, 50, 100, 200, 500, 1000]
        .into_iter()
        .find(|&e| e as f64 * room >= 24.0)
        .unwrap_or(1000)
}

/// `(x_0, …)` written with the minus sign of the input (ASCII), as in tables.
pub fn point_words(z: &[i64]) -> String {
    let parts: Vec<String> = z.iter().map(|v| v.to_string()).collect();
    format!("({})", parts.join(", "))
}

/// Coordinates joined by commas, for `data-` attributes.
pub fn point_data(z: &[i64]) -> String {
    let parts: Vec<String> = z.iter().map(|v| v.to_string()).collect();
    parts.join(",")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_have_two_decimals_at_most_and_no_negative_zero() {
        assert_eq!(num(1.0), "1");
        assert_eq!(num(1.005), "1"); // 100.49999… rounds down in binary
        assert_eq!(num(2.346), "2.35");
        assert_eq!(num(-0.001), "0");
        assert_eq!(num(-3.5), "-3.5");
        assert_eq!(num(f64::NAN), "0");
    }

    #[test]
    fn exponents_become_superscripts() {
        assert_eq!(pretty("{-1,0,1}^3"), "{-1,0,1}³");
        assert_eq!(pretty("2^n' = 16, R^12"), "2ⁿ' = 16, R¹²");
        assert_eq!(pretty("a ^ b^x"), "a ^ b^x");
    }

    #[test]
    fn labels_are_escaped() {
        let mut s = Svg::new(10.0, 10.0, "test", "a <b> & \"c\"", "d");
        s.label(1.0, 2.0, "start", "x < y & z");
        let out = s.finish();
        assert!(
            out.contains("a &lt;b&gt; &amp; &quot;c&quot;")
                || out.contains("a &lt;b&gt; &amp; \"c\"")
        );
        assert!(out.contains("x &lt; y &amp; z"));
        assert!(out.ends_with("</svg>\n"));
    }
}
