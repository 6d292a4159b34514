//! The circuit drawing: where each part of a ladder or section goes, computed from the design's
//! nodes, as a list of drawing primitives the page turns into SVG.
//!
//! The layout reads a design as a series–shunt network:
//! - the **main line** is the shortest chain of parts from the source node to the output node
//!   (through nodes other than ground), drawn left to right along the top rail;
//! - the parts between two neighbouring main nodes are a **series group**, drawn on the rail (one
//!   part) or stacked in parallel below it (several);
//! - a chain of parts from a main node down to ground, through nodes that nothing else touches,
//!   is a **shunt branch**, drawn as a vertical column down to the ground rail;
//! - the source (with its resistance) stands at the left and the load at its node.
//!
//! That covers every ladder and section the core synthesizes (series pairs, band-pass and
//! band-stop resonators, two-part combinations). Parts that fit none of these shapes (bridges,
//! controlled sources, extra sources) are named in a note instead of drawn wrongly.
//!
//! Coordinates are SVG user units with y downwards. A part symbol is centred on `(x, y)` and
//! spans [`BODY`] units along its orientation; the lines here run to its ends. A ground symbol's
//! stem starts [`GROUND_STEM`] units above its `y`.

use bandwright::circuit::is_ground_name;
use bandwright::notation::{format_quantity, Quantity};
use bandwright::{Design, Part};
use serde::Serialize;
use std::collections::{HashMap, HashSet, VecDeque};

/// Length of a part symbol along its axis (the page draws it as ±20 around the centre).
pub const BODY: f64 = 40.0;
/// Length of the ground symbol's stem above its `y`.
pub const GROUND_STEM: f64 = 8.0;
/// y of the top rail (the main line).
pub const RAIL_Y: f64 = 44.0;
/// Width of a series slot.
pub const SLOT: f64 = 96.0;
/// Width of a shunt column.
pub const COLUMN: f64 = 72.0;
/// Vertical pitch of the parts in a shunt branch.
pub const BRANCH_STEP: f64 = 64.0;
/// Vertical pitch of the parts in a parallel series group.
pub const PARALLEL_STEP: f64 = 56.0;
/// x of the source column.
pub const SOURCE_X: f64 = 36.0;
/// Space to the right of the last column for the labels of vertical parts.
pub const RIGHT_MARGIN: f64 = 84.0;
/// Line height of the note under the drawing.
pub const NOTE_LINE: f64 = 16.0;

/// A finished drawing.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Schematic {
    /// Width of the drawing in user units.
    pub width: f64,
    /// Height of the drawing in user units.
    pub height: f64,
    /// What to draw, in drawing order.
    pub primitives: Vec<Primitive>,
}

/// One drawing primitive.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum Primitive {
    /// A wire.
    Line {
        /// Start x.
        x1: f64,
        /// Start y.
        y1: f64,
        /// End x.
        x2: f64,
        /// End y.
        y2: f64,
    },
    /// A resistor symbol.
    Resistor(Symbol),
    /// A capacitor symbol.
    Capacitor(Symbol),
    /// An inductor symbol.
    Inductor(Symbol),
    /// The driving voltage source (a circle).
    Source(Symbol),
    /// A ground symbol; its stem starts [`GROUND_STEM`] above `y`.
    Ground {
        /// x of the stem.
        x: f64,
        /// y of the top bar.
        y: f64,
    },
    /// A junction dot.
    Dot {
        /// Centre x.
        x: f64,
        /// Centre y.
        y: f64,
    },
    /// A line of text.
    Text {
        /// Anchor x.
        x: f64,
        /// Baseline y.
        y: f64,
        /// The text (shown as text, never as markup).
        text: String,
        /// Horizontal anchor.
        anchor: Anchor,
        /// "node" for a node name, "note" for a remark.
        class: TextClass,
    },
}

/// A part symbol centred on `(x, y)`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Symbol {
    /// Centre x.
    pub x: f64,
    /// Centre y.
    pub y: f64,
    /// Along the rail or down a branch.
    pub orientation: Orientation,
    /// The part's reference.
    #[serde(rename = "ref")]
    pub reference: String,
    /// Its value as the core writes it, e.g. "4.70 kΩ".
    pub label: String,
}

/// Which way a symbol runs.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Orientation {
    /// Left to right.
    Horizontal,
    /// Top to bottom.
    Vertical,
}

/// The horizontal anchor of a text (SVG `text-anchor`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Anchor {
    /// Text starts at x.
    Start,
    /// Text is centred on x.
    Middle,
}

/// What a text is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum TextClass {
    /// A node name.
    Node,
    /// A remark.
    Note,
}

/// Lays out `design` (a validated design, as `parse_design` returns it).
pub fn layout(design: &Design) -> Schematic {
    let network = Network::read(design);
    let mut drawing = Drawing::default();
    let depth = network.depth();
    let bottom_y = RAIL_Y + depth;

    // The source column: the source from the rail to the ground rail.
    let source_mid = (RAIL_Y + bottom_y) / 2.0;
    drawing.vertical_part(SOURCE_X, source_mid, PartSymbol::Source, "source", &source_label(design));
    drawing.line(SOURCE_X, RAIL_Y, SOURCE_X, source_mid - BODY / 2.0);
    drawing.line(SOURCE_X, source_mid + BODY / 2.0, SOURCE_X, bottom_y);
    let mut x = SOURCE_X;
    let mut last_column_x = SOURCE_X;
    if design.source.resistance > 0.0 {
        let label = format_quantity(design.source.resistance, Quantity::Resistance, 3);
        drawing.series_slot(x, &[(PartSymbol::Resistor, "Rs".to_string(), label)]);
        x += SLOT;
    }

    for (position, node) in network.main.iter().enumerate() {
        let is_end = position == 0 || position + 1 == network.main.len();
        if is_end {
            drawing.dot(x, RAIL_Y);
            drawing.text(x, RAIL_Y - 30.0, node, Anchor::Middle, TextClass::Node);
        }
        for branch in network.branches.get(node).into_iter().flatten() {
            let column_x = x + COLUMN / 2.0;
            drawing.line(x, RAIL_Y, x + COLUMN, RAIL_Y);
            drawing.dot(column_x, RAIL_Y);
            let mut top = RAIL_Y;
            for (step, (symbol, reference, label)) in branch.iter().enumerate() {
                let centre = RAIL_Y + BRANCH_STEP * step as f64 + BODY;
                drawing.line(column_x, top, column_x, centre - BODY / 2.0);
                drawing.vertical_part(column_x, centre, *symbol, reference, label);
                top = centre + BODY / 2.0;
            }
            drawing.line(column_x, top, column_x, bottom_y);
            drawing.dot(column_x, bottom_y);
            last_column_x = column_x;
            x += COLUMN;
        }
        if let Some(group) = network.series.get(position) {
            drawing.series_slot(x, group);
            x += SLOT;
        }
    }
    if x == SOURCE_X {
        // Nothing but the source: give the rail some length.
        drawing.line(x, RAIL_Y, x + COLUMN / 2.0, RAIL_Y);
        x += COLUMN / 2.0;
    }
    drawing.line(SOURCE_X, bottom_y, last_column_x, bottom_y);
    drawing.push(Primitive::Ground { x: SOURCE_X, y: bottom_y + GROUND_STEM });

    let mut height = bottom_y + GROUND_STEM + 24.0;
    if !network.not_drawn.is_empty() {
        let note = format!(
            "Not drawn: {}. The drawing shows the series and shunt parts of ladders and sections.",
            network.not_drawn.join(", ")
        );
        drawing.text(8.0, height, &note, Anchor::Start, TextClass::Note);
        height += NOTE_LINE;
    }
    let width = (x.max(last_column_x) + RIGHT_MARGIN).max(SOURCE_X + RIGHT_MARGIN);
    Schematic { width, height, primitives: drawing.primitives }
}

/// The part symbols.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum PartSymbol {
    Resistor,
    Capacitor,
    Inductor,
    Source,
}

/// A part as drawn: symbol, reference, value text.
type Drawn = (PartSymbol, String, String);

/// The design read as a series–shunt network.
#[derive(Debug, Default)]
struct Network {
    /// Main nodes from the source node to the output node.
    main: Vec<String>,
    /// Per main edge (main[i] to main[i + 1]): the parts in parallel between them.
    series: Vec<Vec<Drawn>>,
    /// Per main node: its shunt branches, each from the node down to ground.
    branches: HashMap<String, Vec<Vec<Drawn>>>,
    /// Parts that fit no shape, as "REF (kind)".
    not_drawn: Vec<String>,
}

/// A two-terminal part the drawing knows.
struct Edge<'a> {
    reference: &'a str,
    nodes: [&'a str; 2],
    drawn: Drawn,
}

impl Network {
    fn read(design: &Design) -> Self {
        let mut network = Network::default();
        let mut edges: Vec<Edge> = Vec::new();
        for part in &design.elements {
            let symbol = match part {
                Part::Resistor { value, .. } => {
                    Some((PartSymbol::Resistor, format_quantity(*value, Quantity::Resistance, 3)))
                }
                Part::Capacitor { value, .. } => {
                    Some((PartSymbol::Capacitor, format_quantity(*value, Quantity::Capacitance, 3)))
                }
                Part::Inductor { value, .. } => {
                    Some((PartSymbol::Inductor, format_quantity(*value, Quantity::Inductance, 3)))
                }
                _ => None,
            };
            let [a, b] = part.nodes();
            match symbol {
                Some((symbol, label)) => edges.push(Edge {
                    reference: part.reference(),
                    nodes: [a, b],
                    drawn: (symbol, part.reference().to_string(), label),
                }),
                None => network.not_drawn.push(format!("{} ({})", part.reference(), kind_name(part))),
            }
        }
        if let Some(load) = &design.load {
            let ground = "0";
            if let Some(r) = load.resistance {
                let label = format_quantity(r, Quantity::Resistance, 3);
                edges.push(Edge {
                    reference: bandwright::design::LOAD_R_REF,
                    nodes: [&load.node, ground],
                    drawn: (PartSymbol::Resistor, bandwright::design::LOAD_R_REF.to_string(), label),
                });
            }
            if let Some(c) = load.capacitance {
                let label = format_quantity(c, Quantity::Capacitance, 3);
                edges.push(Edge {
                    reference: bandwright::design::LOAD_C_REF,
                    nodes: [&load.node, ground],
                    drawn: (PartSymbol::Capacitor, bandwright::design::LOAD_C_REF.to_string(), label),
                });
            }
        }

        let is_ground = |node: &str| is_ground_name(node);
        let mut at_node: HashMap<&str, Vec<usize>> = HashMap::new();
        for (idx, edge) in edges.iter().enumerate() {
            for node in edge.nodes {
                at_node.entry(node).or_default().push(idx);
            }
        }
        network.main = main_line(&edges, &at_node, &design.source.node, &design.output);
        let main_set: HashSet<&str> = network.main.iter().map(String::as_str).collect();
        let mut used = vec![false; edges.len()];

        for pair in network.main.windows(2) {
            let members: Vec<usize> = (0..edges.len())
                .filter(|&idx| {
                    let nodes = edges[idx].nodes;
                    !used[idx] && nodes.contains(&pair[0].as_str()) && nodes.contains(&pair[1].as_str())
                })
                .collect();
            for &idx in &members {
                used[idx] = true;
            }
            network.series.push(members.iter().map(|&idx| edges[idx].drawn.clone()).collect());
        }

        for node in &network.main {
            let mut branches = Vec::new();
            let touching: Vec<usize> = at_node.get(node.as_str()).cloned().unwrap_or_default();
            for start in touching {
                if used[start] {
                    continue;
                }
                if let Some(chain) = branch_from(&edges, &at_node, &used, &main_set, node, start, is_ground) {
                    for &idx in &chain {
                        used[idx] = true;
                    }
                    branches.push(chain.iter().map(|&idx| edges[idx].drawn.clone()).collect());
                }
            }
            network.branches.insert(node.clone(), branches);
        }

        for (idx, edge) in edges.iter().enumerate() {
            if !used[idx] {
                let kind = match edge.drawn.0 {
                    PartSymbol::Resistor => "resistor",
                    PartSymbol::Capacitor => "capacitor",
                    PartSymbol::Inductor => "inductor",
                    PartSymbol::Source => "source",
                };
                network.not_drawn.push(format!("{} ({kind})", edge.reference));
            }
        }
        network
    }

    /// How far below the rail the ground rail sits.
    fn depth(&self) -> f64 {
        let deepest_branch = self.branches.values().flatten().map(Vec::len).max().unwrap_or(1).max(1);
        let branch_depth = BRANCH_STEP * (deepest_branch - 1) as f64 + BODY + BODY / 2.0 + 20.0;
        let widest_group = self.series.iter().map(Vec::len).max().unwrap_or(1).max(1);
        let group_depth = PARALLEL_STEP * (widest_group - 1) as f64 + 48.0;
        branch_depth.max(group_depth).max(2.0 * BODY + 20.0)
    }
}

/// The shortest chain of parts from `source` to `output` through nodes other than ground.
/// Just `[source]` when the output is the source node or cannot be reached that way.
fn main_line(edges: &[Edge], at_node: &HashMap<&str, Vec<usize>>, source: &str, output: &str) -> Vec<String> {
    let mut previous: HashMap<&str, &str> = HashMap::new();
    let mut queue = VecDeque::from([source]);
    let mut seen = HashSet::from([source]);
    while let Some(node) = queue.pop_front() {
        if node == output {
            break;
        }
        for &idx in at_node.get(node).into_iter().flatten() {
            let [a, b] = edges[idx].nodes;
            let other = if a == node { b } else { a };
            if is_ground_name(other) || !seen.insert(other) {
                continue;
            }
            previous.insert(other, node);
            queue.push_back(other);
        }
    }
    if source == output || !previous.contains_key(output) {
        return vec![source.to_string()];
    }
    let mut path = vec![output];
    while let Some(&before) = previous.get(path[path.len() - 1]) {
        path.push(before);
    }
    path.into_iter().rev().map(str::to_string).collect()
}

/// Follows a chain from main node `node` through part `start` down to ground, through nodes
/// that have exactly two parts and are not on the main line. `None` when it does not end at
/// ground that way.
fn branch_from(
    edges: &[Edge],
    at_node: &HashMap<&str, Vec<usize>>,
    used: &[bool],
    main: &HashSet<&str>,
    node: &str,
    start: usize,
    is_ground: impl Fn(&str) -> bool,
) -> Option<Vec<usize>> {
    const LONGEST_BRANCH: usize = 6;
    let mut chain = vec![start];
    let mut here = node;
    let mut idx = start;
    loop {
        let [a, b] = edges[idx].nodes;
        let next = if a == here { b } else { a };
        if is_ground(next) {
            return Some(chain);
        }
        if main.contains(next) || chain.len() >= LONGEST_BRANCH {
            return None;
        }
        let parts = at_node.get(next)?;
        if parts.len() != 2 {
            return None;
        }
        let following = *parts.iter().find(|&&other| other != idx)?;
        if used[following] || chain.contains(&following) {
            return None;
        }
        chain.push(following);
        here = next;
        idx = following;
    }
}

fn kind_name(part: &Part) -> &'static str {
    match part {
        Part::Resistor { .. } => "resistor",
        Part::Capacitor { .. } => "capacitor",
        Part::Inductor { .. } => "inductor",
        Part::VoltageSource { .. } => "voltage source",
        Part::CurrentSource { .. } => "current source",
        Part::Vcvs { .. } => "controlled source",
    }
}

fn source_label(design: &Design) -> String {
    format_quantity(design.source.amplitude, Quantity::Voltage, 3)
}

/// Collects primitives.
#[derive(Debug, Default)]
struct Drawing {
    primitives: Vec<Primitive>,
}

impl Drawing {
    fn push(&mut self, primitive: Primitive) {
        self.primitives.push(primitive);
    }

    fn line(&mut self, x1: f64, y1: f64, x2: f64, y2: f64) {
        if (x1, y1) != (x2, y2) {
            self.push(Primitive::Line { x1, y1, x2, y2 });
        }
    }

    fn dot(&mut self, x: f64, y: f64) {
        self.push(Primitive::Dot { x, y });
    }

    fn text(&mut self, x: f64, y: f64, text: &str, anchor: Anchor, class: TextClass) {
        self.push(Primitive::Text { x, y, text: text.to_string(), anchor, class });
    }

    fn part(&mut self, x: f64, y: f64, symbol: PartSymbol, orientation: Orientation, reference: &str, label: &str) {
        let symbol_data = Symbol { x, y, orientation, reference: reference.to_string(), label: label.to_string() };
        self.push(match symbol {
            PartSymbol::Resistor => Primitive::Resistor(symbol_data),
            PartSymbol::Capacitor => Primitive::Capacitor(symbol_data),
            PartSymbol::Inductor => Primitive::Inductor(symbol_data),
            PartSymbol::Source => Primitive::Source(symbol_data),
        });
    }

    fn vertical_part(&mut self, x: f64, y: f64, symbol: PartSymbol, reference: &str, label: &str) {
        self.part(x, y, symbol, Orientation::Vertical, reference, label);
    }

    /// A series slot from `x` to `x + SLOT`: one part on the rail, or parallel parts stacked
    /// below it between two vertical wires.
    fn series_slot(&mut self, x: f64, group: &[Drawn]) {
        let centre = x + SLOT / 2.0;
        if group.len() <= 1 {
            self.line(x, RAIL_Y, centre - BODY / 2.0, RAIL_Y);
            if let Some((symbol, reference, label)) = group.first() {
                self.part(centre, RAIL_Y, *symbol, Orientation::Horizontal, reference, label);
            }
            self.line(centre + BODY / 2.0, RAIL_Y, x + SLOT, RAIL_Y);
            return;
        }
        let (left, right) = (x + 12.0, x + SLOT - 12.0);
        let lowest = RAIL_Y + PARALLEL_STEP * (group.len() - 1) as f64;
        self.line(x, RAIL_Y, left, RAIL_Y);
        self.line(right, RAIL_Y, x + SLOT, RAIL_Y);
        self.line(left, RAIL_Y, left, lowest);
        self.line(right, RAIL_Y, right, lowest);
        self.dot(left, RAIL_Y);
        self.dot(right, RAIL_Y);
        for (step, (symbol, reference, label)) in group.iter().enumerate() {
            let y = RAIL_Y + PARALLEL_STEP * step as f64;
            self.line(left, y, centre - BODY / 2.0, y);
            self.part(centre, y, *symbol, Orientation::Horizontal, reference, label);
            self.line(centre + BODY / 2.0, y, right, y);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn design(source_resistance: f64, load: &str, output: &str, elements: &str) -> Design {
        let text = format!(
            r#"{{"format": "bandwright-design", "version": 1, "name": "t",
                "source": {{"node": "in", "resistance": {source_resistance}}}, {load}
                "output": "{output}", "elements": [{elements}]}}"#
        );
        bandwright::parse_design(&text).unwrap()
    }

    /// The drawn parts as (ref, x, y, orientation).
    fn parts(schematic: &Schematic) -> Vec<(String, f64, f64, Orientation)> {
        schematic
            .primitives
            .iter()
            .filter_map(|p| match p {
                Primitive::Resistor(s) | Primitive::Capacitor(s) | Primitive::Inductor(s) | Primitive::Source(s) => {
                    Some((s.reference.clone(), s.x, s.y, s.orientation))
                }
                _ => None,
            })
            .collect()
    }

    fn find<'a>(parts: &'a [(String, f64, f64, Orientation)], reference: &str) -> &'a (String, f64, f64, Orientation) {
        parts.iter().find(|p| p.0 == reference).unwrap_or_else(|| panic!("{reference} not drawn: {parts:?}"))
    }

    fn note(schematic: &Schematic) -> Option<String> {
        schematic.primitives.iter().find_map(|p| match p {
            Primitive::Text { text, class: TextClass::Note, .. } => Some(text.clone()),
            _ => None,
        })
    }

    /// Every primitive lies inside the drawing.
    fn assert_inside(schematic: &Schematic) {
        let inside = |x: f64, y: f64| (0.0..=schematic.width).contains(&x) && (0.0..=schematic.height).contains(&y);
        for primitive in &schematic.primitives {
            let ok = match primitive {
                Primitive::Line { x1, y1, x2, y2 } => inside(*x1, *y1) && inside(*x2, *y2),
                Primitive::Resistor(s) | Primitive::Capacitor(s) | Primitive::Inductor(s) | Primitive::Source(s) => {
                    inside(s.x - BODY / 2.0, s.y - BODY / 2.0) && inside(s.x + BODY / 2.0, s.y + BODY / 2.0)
                }
                Primitive::Ground { x, y } | Primitive::Dot { x, y } | Primitive::Text { x, y, .. } => inside(*x, *y),
            };
            assert!(ok, "{primitive:?} outside {} × {}", schematic.width, schematic.height);
        }
    }

    #[test]
    fn shunt_first_ladder_alternates_columns_and_series_slots() {
        // The core's third-order shunt-first low-pass ladder: C1 in–0, L2 in–out, C3 out–0.
        let schematic = layout(&design(
            1000.0,
            r#""load": {"node": "out", "resistance": 10000},"#,
            "out",
            r#"{"ref": "C1", "kind": "capacitor", "value": "100n", "nodes": ["in", "0"]},
               {"ref": "L2", "kind": "inductor", "value": "330m", "nodes": ["in", "out"]},
               {"ref": "C3", "kind": "capacitor", "value": "22n", "nodes": ["out", "0"]}"#,
        ));
        let parts = parts(&schematic);
        let (source, rs, c1, l2, c3, load) = (
            find(&parts, "source"),
            find(&parts, "Rs"),
            find(&parts, "C1"),
            find(&parts, "L2"),
            find(&parts, "C3"),
            find(&parts, "load.R"),
        );
        assert!(source.1 < rs.1 && rs.1 < c1.1 && c1.1 < l2.1 && l2.1 < c3.1 && c3.1 < load.1, "{parts:?}");
        assert_eq!((rs.2, rs.3), (RAIL_Y, Orientation::Horizontal));
        assert_eq!((l2.2, l2.3), (RAIL_Y, Orientation::Horizontal));
        for shunt in [c1, c3, load, source] {
            assert_eq!(shunt.3, Orientation::Vertical, "{shunt:?}");
            assert!(shunt.2 > RAIL_Y, "{shunt:?}");
        }
        assert_eq!(note(&schematic), None);
        let labels: Vec<&str> = schematic
            .primitives
            .iter()
            .filter_map(|p| match p {
                Primitive::Inductor(s) => Some(s.label.as_str()),
                _ => None,
            })
            .collect();
        assert_eq!(labels, ["330 mH"]);
        assert_eq!(schematic.primitives.iter().filter(|p| matches!(p, Primitive::Ground { .. })).count(), 1);
        assert_inside(&schematic);
    }

    #[test]
    fn series_chain_through_inner_nodes_stays_on_the_rail() {
        // A series R–L–C band-pass into a load: every part on the main line, in order.
        let schematic = layout(&design(
            50.0,
            r#""load": {"node": "out", "resistance": 50},"#,
            "out",
            r#"{"ref": "R1", "kind": "resistor", "value": 10, "nodes": ["in", "n1"]},
               {"ref": "L1", "kind": "inductor", "value": "1m", "nodes": ["n1", "n2"]},
               {"ref": "C1", "kind": "capacitor", "value": "1u", "nodes": ["n2", "out"]}"#,
        ));
        let parts = parts(&schematic);
        let (r1, l1, c1) = (find(&parts, "R1"), find(&parts, "L1"), find(&parts, "C1"));
        assert!(r1.1 < l1.1 && l1.1 < c1.1);
        assert!([r1, l1, c1].iter().all(|p| p.2 == RAIL_Y && p.3 == Orientation::Horizontal));
        assert_eq!(note(&schematic), None);
        assert_inside(&schematic);
    }

    #[test]
    fn a_trap_to_ground_is_one_column_and_a_tank_is_stacked() {
        // Band-stop ladder piece: tank L1 ∥ C1 in series, then trap L2–C2 from out to ground.
        let schematic = layout(&design(
            600.0,
            r#""load": {"node": "out", "resistance": 600},"#,
            "out",
            r#"{"ref": "L1", "kind": "inductor", "value": "10m", "nodes": ["in", "out"]},
               {"ref": "C1", "kind": "capacitor", "value": "100n", "nodes": ["in", "out"]},
               {"ref": "L2", "kind": "inductor", "value": "22m", "nodes": ["out", "m2"]},
               {"ref": "C2", "kind": "capacitor", "value": "47n", "nodes": ["m2", "0"]}"#,
        ));
        let parts = parts(&schematic);
        let (l1, c1, l2, c2) = (find(&parts, "L1"), find(&parts, "C1"), find(&parts, "L2"), find(&parts, "C2"));
        // The tank: same column, one above the other, both horizontal.
        assert_eq!(l1.1, c1.1);
        assert!(l1.2 < c1.2 && l1.3 == Orientation::Horizontal && c1.3 == Orientation::Horizontal);
        // The trap: one column, the inductor above the capacitor, after the tank.
        assert_eq!(l2.1, c2.1);
        assert!(l2.1 > l1.1 && l2.2 < c2.2 && l2.3 == Orientation::Vertical);
        // The ground rail lies below the trap's capacitor.
        let ground_y = schematic
            .primitives
            .iter()
            .find_map(|p| if let Primitive::Ground { y, .. } = p { Some(*y) } else { None })
            .unwrap();
        assert!(ground_y - GROUND_STEM >= c2.2 + BODY / 2.0);
        assert_eq!(note(&schematic), None);
        assert_inside(&schematic);
    }

    #[test]
    fn output_at_the_source_node_and_no_source_resistance() {
        // Shunt tank across an ideal source's node (the output is the input node).
        let schematic = layout(&design(
            0.0,
            "",
            "in",
            r#"{"ref": "L1", "kind": "inductor", "value": "1m", "nodes": ["in", "0"]},
               {"ref": "C1", "kind": "capacitor", "value": "1u", "nodes": ["in", "gnd"]}"#,
        ));
        let parts = parts(&schematic);
        assert!(parts.iter().all(|p| p.0 != "Rs"));
        let (l1, c1) = (find(&parts, "L1"), find(&parts, "C1"));
        assert!(l1.1 != c1.1 && l1.3 == Orientation::Vertical && c1.3 == Orientation::Vertical);
        assert_inside(&schematic);
    }

    #[test]
    fn parts_of_no_known_shape_are_named_not_drawn() {
        // A bridging resistor across two main nodes and a controlled source.
        let schematic = layout(&design(
            50.0,
            r#""load": {"node": "out", "resistance": 1000},"#,
            "out",
            r#"{"ref": "R1", "kind": "resistor", "value": 100, "nodes": ["in", "a"]},
               {"ref": "R2", "kind": "resistor", "value": 100, "nodes": ["a", "out"]},
               {"ref": "R3", "kind": "resistor", "value": 100, "nodes": ["in", "b"]},
               {"ref": "R4", "kind": "resistor", "value": 100, "nodes": ["b", "out"]},
               {"ref": "E1", "kind": "vcvs", "gain": 2, "nodes": ["x", "0"], "control": ["a", "0"]},
               {"ref": "R5", "kind": "resistor", "value": 100, "nodes": ["x", "0"]}"#,
        ));
        let text = note(&schematic).expect("a note");
        assert!(
            text.contains("E1 (controlled source)") && text.contains("R3 (resistor)") && text.contains("R4 (resistor)"),
            "{text}"
        );
        let parts = parts(&schematic);
        assert!(parts.iter().any(|p| p.0 == "R1") && parts.iter().any(|p| p.0 == "R2"));
        assert!(parts.iter().all(|p| p.0 != "R3" && p.0 != "E1"));
        assert_inside(&schematic);
    }

    #[test]
    fn the_json_has_the_shape_the_page_reads() {
        let schematic = layout(&design(
            50.0,
            "",
            "out",
            r#"{"ref": "R1", "kind": "resistor", "value": 100, "nodes": ["in", "out"]},
               {"ref": "C1", "kind": "capacitor", "value": "1u", "nodes": ["out", "0"]}"#,
        ));
        let json = serde_json::to_value(&schematic).unwrap();
        assert!(json["width"].as_f64().unwrap() > 0.0 && json["height"].as_f64().unwrap() > 0.0);
        let items = json["primitives"].as_array().unwrap();
        let resistor = items.iter().find(|p| p["kind"] == "resistor" && p["ref"] == "R1").unwrap();
        assert_eq!(resistor["orientation"], "horizontal");
        assert_eq!(resistor["label"], "100 Ω");
        assert!(items.iter().any(|p| p["kind"] == "ground"));
        assert!(items.iter().any(|p| p["kind"] == "line" && p.get("x1").is_some()));
        assert!(items.iter().any(|p| p["kind"] == "text" && p["text"] == "out" && p["anchor"] == "middle"));
    }

    proptest::proptest! {
        #![proptest_config(proptest::prelude::ProptestConfig::with_cases(2000))]

        // Any valid design (from a file or a link) gets a drawing without a panic, and every
        // number in it is finite (about 880 of the 2000 random designs pass validation).
        #[test]
        fn any_valid_design_is_drawn(
            parts in proptest::collection::vec((0usize..4, 0usize..6, 0usize..6, 0u8..3), 1..12),
            output in 0usize..6,
            load in proptest::option::of(0usize..6),
        ) {
            let node = |k: usize| if k == 0 { "0".to_string() } else { format!("n{k}") };
            let elements: Vec<String> = parts
                .iter()
                .enumerate()
                .filter(|(_, (_, a, b, _))| a != b)
                .map(|(i, &(_, a, b, kind))| {
                    let (kind, value) = [("resistor", "1k"), ("capacitor", "10n"), ("inductor", "1m")][kind as usize];
                    format!(r#"{{"ref": "X{i}", "kind": "{kind}", "value": "{value}", "nodes": ["{}", "{}"]}}"#, node(a), node(b))
                })
                .collect();
            let load = load.map(|k| format!(r#""load": {{"node": "{}", "resistance": 1000}},"#, node(k))).unwrap_or_default();
            let json = format!(
                r#"{{"format": "bandwright-design", "version": 1, "name": "random",
                    "source": {{"node": "n1", "resistance": 50}}, {load} "output": "{}",
                    "elements": [{}]}}"#,
                node(output),
                elements.join(", ")
            );
            // Only designs the core accepts reach the schematic.
            let Ok(design) = bandwright::parse_design(&json) else { return Ok(()) };
            let drawing = layout(&design);
            let value = serde_json::to_value(&drawing).unwrap();
            let (w, h) = (value["width"].as_f64().unwrap(), value["height"].as_f64().unwrap());
            proptest::prop_assert!(w.is_finite() && h.is_finite() && w > 0.0 && h > 0.0);
            fn numbers(v: &serde_json::Value, out: &mut Vec<f64>) {
                match v {
                    serde_json::Value::Number(n) => out.push(n.as_f64().unwrap()),
                    serde_json::Value::Array(a) => a.iter().for_each(|x| numbers(x, out)),
                    serde_json::Value::Object(o) => o.values().for_each(|x| numbers(x, out)),
                    _ => {}
                }
            }
            let mut all = Vec::new();
            numbers(&value["primitives"], &mut all);
            proptest::prop_assert!(all.iter().all(|x| x.is_finite()), "{json}");
        }
    }
}
