//! The report's colours and fills.
//!
//! Data colours are the eight-colour set designed to stay distinguishable under the common
//! forms of colour-vision deficiency: M. Okabe, K. Ito, "Color Universal Design (CUD): how to
//! make figures and presentations that are friendly to colorblind people", 2008. Black is kept
//! for switch marks; the other seven colour parts and tracks.
//!
//! Colour alone never carries a distinction: every fill also has a texture (solid, stripes or
//! dots, drawn as SVG patterns) and every line a dash pattern, so the charts read in greyscale
//! print too. Tracks get one of 20 styles (7 colours x 3 textures, less the missed part's
//! orange stripes): each track starts from its own colour (its index modulo 7) and takes the
//! first style, solid ones first, that no track sharing a true object with it already has. Track ids are also written on the bars wide enough
//! to hold them, and every bar names its track in its tooltip.

use std::fmt::Write;

/// The seven Okabe-Ito colours used for data, in their published order (black left out).
pub const COLOURS: [&str; 7] = [
    "#E69F00", // orange
    "#56B4E9", // sky blue
    "#009E73", // bluish green
    "#F0E442", // yellow
    "#0072B2", // blue
    "#D55E00", // vermillion
    "#CC79A7", // reddish purple
];

/// Ink for switch marks, axes and text.
pub const INK: &str = "#1d232b";

/// Number of textures.
pub const TEXTURES: usize = 3;

/// A fill or line style: a colour (index into [`COLOURS`]) and a texture (0 solid, 1 stripes,
/// 2 dots; for lines: solid, dashed, dotted).
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub struct Style {
    /// Index into [`COLOURS`].
    pub colour: usize,
    /// 0 solid, 1 stripes, 2 dots.
    pub texture: usize,
}

/// The localisation part: blue, solid.
pub const LOCALISATION: Style = Style {
    colour: 4,
    texture: 0,
};
/// The missed part: orange, striped.
pub const MISSED: Style = Style {
    colour: 0,
    texture: 1,
};
/// The false part: reddish purple, dotted.
pub const FALSE: Style = Style {
    colour: 6,
    texture: 2,
};
/// The switching part: bluish green, striped.
pub const SWITCHING: Style = Style {
    colour: 2,
    texture: 1,
};

impl Style {
    /// The style with index `index` in `0..STYLES`.
    pub fn from_index(index: usize) -> Self {
        Style {
            colour: index % COLOURS.len(),
            texture: (index / COLOURS.len()) % TEXTURES,
        }
    }

    /// The colour's hex code.
    pub fn hex(&self) -> &'static str {
        COLOURS[self.colour]
    }

    /// The value of a `fill` attribute: the colour, or a pattern defined by [`defs`].
    pub fn fill(&self, prefix: &str) -> String {
        if self.texture == 0 {
            self.hex().to_string()
        } else {
            format!("url(#{})", self.pattern_id(prefix))
        }
    }

    /// The stroke attributes for a line in this style.
    pub fn stroke(&self, width: f64) -> String {
        let dash = match self.texture {
            1 => " stroke-dasharray=\"7 3\"",
            2 => " stroke-dasharray=\"1.2 2.8\" stroke-linecap=\"round\"",
            _ => "",
        };
        format!(
            "stroke=\"{}\" stroke-width=\"{}\"{dash}",
            self.hex(),
            super::svg::n(width)
        )
    }

    fn pattern_id(&self, prefix: &str) -> String {
        format!("{prefix}-p{}-{}", self.colour, self.texture)
    }

    /// A name for legends: "blue, striped".
    pub fn describe(&self) -> String {
        let colour = [
            "orange",
            "sky blue",
            "bluish green",
            "yellow",
            "blue",
            "vermillion",
            "reddish purple",
        ][self.colour];
        let texture = ["solid", "striped", "dotted"][self.texture];
        format!("{colour}, {texture}")
    }
}

/// `<defs>` holding the patterns of the textured styles among `styles` (ids start with
/// `prefix`, which must be unique on the page).
pub fn defs(prefix: &str, styles: &[Style]) -> String {
    let mut used: Vec<Style> = styles.iter().copied().filter(|s| s.texture != 0).collect();
    used.sort();
    used.dedup();
    let mut out = String::from("<defs>");
    for style in used {
        let _ = write!(
            out,
            "<pattern id=\"{}\" width=\"6\" height=\"6\" patternUnits=\"userSpaceOnUse\"",
            style.pattern_id(prefix)
        );
        match style.texture {
            1 => {
                let _ = write!(
                    out,
                    " patternTransform=\"rotate(45)\"><rect width=\"6\" height=\"6\" fill=\"{}\"/>\
                     <rect width=\"2.2\" height=\"6\" fill=\"#fff\" fill-opacity=\"0.8\"/></pattern>",
                    style.hex()
                );
            }
            _ => {
                let _ = write!(
                    out,
                    "><rect width=\"6\" height=\"6\" fill=\"{}\"/>\
                     <circle cx=\"3\" cy=\"3\" r=\"1.4\" fill=\"#fff\" fill-opacity=\"0.85\"/></pattern>",
                    style.hex()
                );
            }
        }
    }
    out.push_str("</defs>");
    out
}

/// Gives each of `count` tracks a style so that no two tracks listed as neighbours of each
/// other share one while styles last. The missed part's style (orange, striped) is never given
/// to a track, as missed runs appear beside tracks in the identity chart. `neighbours[j]` lists the tracks that share a true object
/// with track `j`. Deterministic: tracks are styled in index order.
pub fn assign_styles(count: usize, neighbours: &[Vec<usize>]) -> Vec<Style> {
    let mut assigned: Vec<Option<usize>> = vec![None; count];
    for j in 0..count {
        let taken: Vec<usize> = neighbours
            .get(j)
            .map(|list| list.iter().filter_map(|&k| assigned[k]).collect())
            .unwrap_or_default();
        let start = j % COLOURS.len();
        let mut chosen = start;
        'search: for texture in 0..TEXTURES {
            for k in 0..COLOURS.len() {
                let index = texture * COLOURS.len() + (start + k) % COLOURS.len();
                if Style::from_index(index) != MISSED && !taken.contains(&index) {
                    chosen = index;
                    break 'search;
                }
            }
        }
        assigned[j] = Some(chosen);
    }
    assigned
        .into_iter()
        .map(|s| Style::from_index(s.unwrap_or(0)))
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn neighbours_get_different_styles() {
        // Tracks 0, 7 and 14 would all start from orange; as neighbours they must differ.
        let mut neighbours = vec![Vec::new(); 15];
        for (a, b) in [(0, 7), (0, 14), (7, 14)] {
            neighbours[a].push(b);
            neighbours[b].push(a);
        }
        let styles = assign_styles(15, &neighbours);
        assert_eq!(styles[0], Style::from_index(0));
        assert_ne!(styles[0], styles[7]);
        assert_ne!(styles[7], styles[14]);
        assert_ne!(styles[0], styles[14]);
        // A lone track keeps its own colour, solid.
        assert_eq!(styles[3], Style::from_index(3));
    }

    #[test]
    fn patterns_are_defined_once_per_textured_style() {
        let text = defs("x", &[MISSED, MISSED, LOCALISATION, FALSE]);
        assert_eq!(text.matches("<pattern").count(), 2);
        assert!(MISSED.fill("x").starts_with("url(#x-"));
        assert_eq!(LOCALISATION.fill("x"), "#0072B2");
    }
}
