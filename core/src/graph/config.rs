//! Frame graphs as TOML files (feature `std`): the static structure of a system (frames,
//! parents, fixed, spin, Earth and site edges) in a human-editable file kept in version
//! control; sampled and function edges are declared there and attached in code.
//!
//! The layout (rotaframe's own): two top-level keys and one `[[frame]]` table per frame, in
//! any order (a frame may name a parent listed after it):
//!
//! ```toml
//! root = "inertial"          # the root frame's name
//! inertial = true            # whether the root is inertial (default true)
//!
//! [[frame]]
//! name = "ecef"
//! parent = "inertial"
//! kind = "earth"
//! angle_at_epoch = 0.0       # rad; or epoch_ut1 = [2460676.5, 0.25], a two-part UT1 Julian date
//! model = "WGS84"            # "WGS84" (default), "GRS80", or { a, f, gm, omega } and
//!                            # optionally gamma_equator, gamma_pole, j2
//!
//! [[frame]]
//! name = "pad"
//! parent = "ecef"
//! kind = "site"
//! latitude = 0.4974         # rad (or latitude_deg); likewise longitude / longitude_deg
//! longitude = -1.4067
//! height = 3.0               # m, ellipsoidal
//! axes = "ned"               # or "enu" (default "ned")
//!
//! [[frame]]
//! name = "turntable"
//! parent = "pad"
//! kind = "spin"
//! axis = [0.0, 0.0, 1.0]     # in the parent's axes
//! rate = 2.0                 # rad/s at t = 0
//! angle_at_zero = 0.0        # rad (default 0)
//! angular_acceleration = 0.0 # rad/s² (default 0)
//!
//! [[frame]]
//! name = "accel"
//! parent = "turntable"
//! kind = "fixed"
//! rotation = [1.0, 0.0, 0.0, 0.0]  # child to parent, w x y z (or euler_deg = [yaw, pitch, roll])
//! position = [0.5, 0.0, 0.0]       # m, in the parent (default zero)
//!
//! [[frame]]
//! name = "vehicle"
//! parent = "ecef"
//! kind = "samples"           # or "function": the motion is attached in code
//! ```
//!
//! Reading a file checks everything a graph built in code would (and gives the line of the
//! offending table or key): unknown keys, wrong types, keys that do not belong to the kind,
//! duplicate names, unknown parents, parent loops, bad values.

use alloc::string::{String, ToString};
use alloc::vec::Vec;

use nalgebra::{Quaternion, UnitQuaternion, Vector3};
use serde::{Deserialize, Serialize};

use alloc::collections::BTreeMap;

use super::error::GraphError;
use super::tree::{Declared, Edge, FrameGraph};
use super::{EarthRotation, Fixed, LocalAxes, Site, Spin, StaticEdge};
use crate::earth::{EarthModel, GRS80, Geodetic, WGS84};
use crate::rotation::{EulerZyx, quaternion_from_wxyz};

#[derive(Debug, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
struct FileDoc {
    root: String,
    #[serde(default = "yes")]
    inertial: bool,
    #[serde(default, rename = "frame", skip_serializing_if = "Vec::is_empty")]
    frames: Vec<toml::Spanned<FrameDoc>>,
}

fn yes() -> bool {
    true
}

#[derive(Debug, Default, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
struct FrameDoc {
    name: String,
    parent: String,
    kind: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    rotation: Option<[f64; 4]>,
    #[serde(skip_serializing_if = "Option::is_none")]
    euler_deg: Option<[f64; 3]>,
    #[serde(skip_serializing_if = "Option::is_none")]
    position: Option<[f64; 3]>,
    #[serde(skip_serializing_if = "Option::is_none")]
    axis: Option<[f64; 3]>,
    #[serde(skip_serializing_if = "Option::is_none")]
    rate: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    angle_at_zero: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    angular_acceleration: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    angle_at_epoch: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    epoch_ut1: Option<[f64; 2]>,
    #[serde(skip_serializing_if = "Option::is_none")]
    model: Option<ModelDoc>,
    #[serde(skip_serializing_if = "Option::is_none")]
    latitude: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    latitude_deg: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    longitude: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    longitude_deg: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    height: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    axes: Option<String>,
}

#[derive(Debug, Deserialize, Serialize)]
#[serde(untagged)]
enum ModelDoc {
    Preset(String),
    Constants(ModelConstants),
}

#[derive(Debug, Deserialize, Serialize)]
#[serde(deny_unknown_fields)]
struct ModelConstants {
    a: f64,
    f: f64,
    gm: f64,
    omega: f64,
    #[serde(skip_serializing_if = "Option::is_none")]
    gamma_equator: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    gamma_pole: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    j2: Option<f64>,
}

/// The keys each kind takes besides `name`, `parent` and `kind`.
fn allowed_keys(kind: &str) -> Option<&'static [&'static str]> {
    Some(match kind {
        "fixed" => &["rotation", "euler_deg", "position"],
        "spin" => &["axis", "rate", "angle_at_zero", "angular_acceleration"],
        "earth" => &["angle_at_epoch", "epoch_ut1", "model"],
        "site" => &["latitude", "latitude_deg", "longitude", "longitude_deg", "height", "axes", "model"],
        "samples" | "function" => &[],
        _ => return None,
    })
}

impl FrameDoc {
    /// The optional keys present in this table.
    fn present(&self) -> Vec<&'static str> {
        let flags = [
            ("rotation", self.rotation.is_some()),
            ("euler_deg", self.euler_deg.is_some()),
            ("position", self.position.is_some()),
            ("axis", self.axis.is_some()),
            ("rate", self.rate.is_some()),
            ("angle_at_zero", self.angle_at_zero.is_some()),
            ("angular_acceleration", self.angular_acceleration.is_some()),
            ("angle_at_epoch", self.angle_at_epoch.is_some()),
            ("epoch_ut1", self.epoch_ut1.is_some()),
            ("model", self.model.is_some()),
            ("latitude", self.latitude.is_some()),
            ("latitude_deg", self.latitude_deg.is_some()),
            ("longitude", self.longitude.is_some()),
            ("longitude_deg", self.longitude_deg.is_some()),
            ("height", self.height.is_some()),
            ("axes", self.axes.is_some()),
        ];
        flags.iter().filter(|(_, p)| *p).map(|(k, _)| *k).collect()
    }

    fn model(&self) -> Result<EarthModel, String> {
        match &self.model {
            None => Ok(WGS84),
            Some(ModelDoc::Preset(name)) => match name.as_str() {
                "WGS84" => Ok(WGS84),
                "GRS80" => Ok(GRS80),
                other => Err(alloc::format!(
                    "`model` = {other:?} is not a known ellipsoid (\"WGS84\" or \"GRS80\", or a table of constants)"
                )),
            },
            Some(ModelDoc::Constants(c)) => match (c.gamma_equator, c.gamma_pole, c.j2) {
                (None, None, None) => EarthModel::from_defining_constants(c.a, c.f, c.gm, c.omega).map_err(|e| e.to_string()),
                (Some(ge), Some(gp), Some(j2)) => {
                    EarthModel::custom(c.a, c.f, c.gm, c.omega, ge, gp, j2).map_err(|e| e.to_string())
                }
                _ => Err("give `gamma_equator`, `gamma_pole` and `j2` together, or none of them".to_string()),
            },
        }
    }

    /// Both spellings of an angle: radians or degrees, at most one.
    fn angle(radians: Option<f64>, degrees: Option<f64>, name: &str) -> Result<f64, String> {
        match (radians, degrees) {
            (Some(r), None) => Ok(r),
            (None, Some(d)) => Ok(d.to_radians()),
            (None, None) => Err(alloc::format!("a site needs `{name}` (rad) or `{name}_deg`")),
            (Some(_), Some(_)) => Err(alloc::format!("give `{name}` or `{name}_deg`, not both")),
        }
    }

    /// The edge this table describes (declared kinds give `None`).
    fn edge(&self) -> Result<Option<StaticEdge>, String> {
        let err = |e: crate::Error| e.to_string();
        Ok(Some(match self.kind.as_str() {
            "fixed" => {
                let rotation = match (self.rotation, self.euler_deg) {
                    (Some(q), None) => quaternion_from_wxyz(q, "rotation").map_err(err)?,
                    (None, Some([yaw, pitch, roll])) => {
                        let e = EulerZyx::from_degrees(yaw, pitch, roll);
                        e.validate("euler_deg").map_err(err)?;
                        e.to_quaternion()
                    }
                    (None, None) => UnitQuaternion::identity(),
                    (Some(_), Some(_)) => return Err("give `rotation` or `euler_deg`, not both".to_string()),
                };
                StaticEdge::Fixed(Fixed::new(rotation, Vector3::from(self.position.unwrap_or_default())).map_err(err)?)
            }
            "spin" => {
                let axis = self.axis.ok_or("a spin needs `axis`")?;
                let rate = self.rate.ok_or("a spin needs `rate` (rad/s)")?;
                StaticEdge::Spin(
                    Spin::new(
                        Vector3::from(axis),
                        rate,
                        self.angle_at_zero.unwrap_or(0.0),
                        self.angular_acceleration.unwrap_or(0.0),
                    )
                    .map_err(err)?,
                )
            }
            "earth" => {
                let model = self.model()?;
                StaticEdge::Earth(match (self.angle_at_epoch, self.epoch_ut1) {
                    (Some(_), Some(_)) => return Err("give `angle_at_epoch` or `epoch_ut1`, not both".to_string()),
                    (None, Some([jd, fraction])) => EarthRotation::at_ut1_epoch(model, jd, fraction).map_err(err)?,
                    (angle, None) => EarthRotation::with_angle(model, angle.unwrap_or(0.0)).map_err(err)?,
                })
            }
            "site" => {
                let latitude = Self::angle(self.latitude, self.latitude_deg, "latitude")?;
                let longitude = Self::angle(self.longitude, self.longitude_deg, "longitude")?;
                let height = self.height.ok_or("a site needs `height` (m, ellipsoidal)")?;
                let axes = match self.axes.as_deref() {
                    None | Some("ned") => LocalAxes::Ned,
                    Some("enu") => LocalAxes::Enu,
                    Some(other) => return Err(alloc::format!("`axes` = {other:?} must be \"ned\" or \"enu\"")),
                };
                StaticEdge::Site(Site::new(self.model()?, Geodetic::new(latitude, longitude, height), axes).map_err(err)?)
            }
            _ => return Ok(None),
        }))
    }

    /// The table of a graph's frame.
    fn of(name: &str, parent: &str, edge: &Edge) -> Self {
        let mut doc = FrameDoc {
            name: name.to_string(),
            parent: parent.to_string(),
            // The full-model Earth edge needs its Earth orientation table: declared, attached in
            // code after loading.
            kind: if matches!(edge, Edge::EarthIers(_)) { "function" } else { edge.kind_name() }.to_string(),
            ..Self::default()
        };
        let model_doc = |m: &EarthModel| {
            if *m == WGS84 {
                None
            } else if *m == GRS80 {
                Some(ModelDoc::Preset("GRS80".to_string()))
            } else {
                let c = m.constants();
                Some(ModelDoc::Constants(ModelConstants {
                    a: c.semi_major_axis,
                    f: c.flattening,
                    gm: c.gm,
                    omega: c.rotation_rate,
                    gamma_equator: Some(c.gamma_equator),
                    gamma_pole: Some(c.gamma_pole),
                    j2: Some(c.j2),
                }))
            }
        };
        if let Edge::Static(edge) = edge {
            match edge {
                StaticEdge::Fixed(f) => {
                    let q: Quaternion<f64> = f.rotation().into_inner();
                    doc.rotation = Some([q.w, q.i, q.j, q.k]);
                    doc.position = Some(f.position().into());
                }
                StaticEdge::Spin(s) => {
                    doc.axis = Some(s.axis().into());
                    doc.rate = Some(s.rate());
                    doc.angle_at_zero = Some(s.angle_at_zero());
                    doc.angular_acceleration = Some(s.angular_acceleration());
                }
                StaticEdge::Earth(e) => {
                    match e.epoch_ut1() {
                        Some((jd, fraction)) => doc.epoch_ut1 = Some([jd, fraction]),
                        None => doc.angle_at_epoch = Some(e.angle_at_epoch()),
                    }
                    doc.model = model_doc(e.model());
                }
                StaticEdge::Site(s) => {
                    let p = s.position();
                    doc.latitude = Some(p.latitude);
                    doc.longitude = Some(p.longitude);
                    doc.height = Some(p.height);
                    doc.axes = Some(if s.axes() == LocalAxes::Enu { "enu" } else { "ned" }.to_string());
                    doc.model = model_doc(s.model());
                }
            }
        }
        doc
    }
}

/// The bare key assigned on the line of byte `offset` in `text` (`rate` for `rate = "fast"`).
fn key_at(text: &str, offset: usize) -> Option<&str> {
    let offset = offset.min(text.len());
    let start = text[..offset].rfind('\n').map_or(0, |i| i + 1);
    let end = text[start..].find('\n').map_or(text.len(), |i| start + i);
    let (key, _) = text[start..end].split_once('=')?;
    let key = key.trim();
    (!key.is_empty() && key.chars().all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '-')).then_some(key)
}

/// The 1-based line of byte `offset` in `text`.
fn line_of(text: &str, offset: usize) -> usize {
    text.as_bytes()[..offset.min(text.len())].iter().filter(|&&b| b == b'\n').count() + 1
}

impl FrameGraph {
    /// The graph's static structure as a TOML file (the layout of the
    /// [configuration module](self)). Sampled and function frames are written as declared
    /// (`kind = "samples"` or `"function"`), to be attached in code after loading. Numbers are
    /// written in shortest round-trip form, so [`from_toml`](Self::from_toml) gives back the
    /// same graph, bit for bit.
    ///
    /// ```
    /// use rotaframe::graph::{FrameGraph, Spin};
    /// let mut g = FrameGraph::new("lab", true);
    /// g.add_spin("table", "lab", Spin::new(nalgebra::Vector3::z(), 3.0, 0.0, 0.0).unwrap()).unwrap();
    /// let text = g.to_toml();
    /// assert!(text.contains("kind = \"spin\""));
    /// let back = FrameGraph::from_toml(&text).unwrap();
    /// assert_eq!(back.to_toml(), text);
    /// ```
    #[must_use]
    pub fn to_toml(&self) -> String {
        let frames = self
            .frames()
            .enumerate()
            .skip(1)
            .map(|(id, name)| {
                let parent = self.parent_of(name).ok().flatten().unwrap_or_default();
                let edge = self.edge(name).expect("a frame of this graph");
                let _ = id;
                toml::Spanned::new(0..0, FrameDoc::of(name, parent, edge))
            })
            .collect();
        let doc = FileDoc { root: self.root().to_string(), inertial: self.is_inertial(), frames };
        let body = toml::to_string(&doc).unwrap_or_default();
        alloc::format!(
            "# rotaframe frame graph: each [[frame]] hangs from its parent by an edge of its kind\n\
             # (fixed, spin, earth, site; samples and function edges are attached in code).\n\
             # Angles in radians, lengths in metres, rates in rad/s; quaternions w, x, y, z.\n\n{body}"
        )
    }

    /// A graph from a TOML file (the layout of the [configuration module](self)). Frames
    /// declared as `samples` or `function` wait for their motion
    /// ([`add_samples`](Self::add_samples) / [`add_function`](Self::add_function) with the
    /// same name and parent).
    ///
    /// # Errors
    /// [`GraphError::Config`] with the line for a malformed file, an unknown key, a wrong type,
    /// a key that does not belong to the frame's kind or a bad value; [`GraphError::Config`]
    /// also for duplicate names, unknown parents and parent loops (with the line of the frame).
    ///
    /// ```
    /// let e = rotaframe::graph::FrameGraph::from_toml("root = \"lab\"\n[[frame]]\nname = \"a\"\nparent = \"lab\"\nkind = \"fixed\"\nrate = 2.0\n").unwrap_err();
    /// assert_eq!(e.to_string(), "frame graph file, line 2: frame \"a\": key `rate` does not apply to a fixed frame (keys: rotation, euler_deg, position)");
    /// ```
    pub fn from_toml(text: &str) -> Result<Self, GraphError> {
        let doc: FileDoc = toml::from_str(text).map_err(|e| {
            let message = e.message().trim_end();
            // A value of the wrong type: the parser names the line; the key is on it.
            let key = e.span().and_then(|s| key_at(text, s.start)).filter(|k| !message.contains(&alloc::format!("`{k}`")));
            GraphError::Config {
                line: e.span().map(|s| line_of(text, s.start)),
                message: match key {
                    Some(k) => alloc::format!("key `{k}`: {message}"),
                    None => message.to_string(),
                },
            }
        })?;
        let mut graph = FrameGraph::try_new(&doc.root, doc.inertial)
            .map_err(|e| GraphError::Config { line: None, message: alloc::format!("`root`: {e}") })?;
        let config = |span: &core::ops::Range<usize>, message: String| GraphError::Config {
            line: Some(line_of(text, span.start)),
            message,
        };
        // Check each table on its own first.
        let mut index: BTreeMap<&str, usize> = BTreeMap::new();
        for (k, frame) in doc.frames.iter().enumerate() {
            let (span, f) = (frame.span(), frame.get_ref());
            let keys = allowed_keys(&f.kind).ok_or_else(|| {
                config(
                    &span,
                    alloc::format!(
                        "frame {:?}: `kind` = {:?} must be fixed, spin, earth, site, samples or function",
                        f.name,
                        f.kind
                    ),
                )
            })?;
            if let Some(key) = f.present().into_iter().find(|k| !keys.contains(k)) {
                let listed = if keys.is_empty() { "none".to_string() } else { keys.join(", ") };
                return Err(config(
                    &span,
                    alloc::format!("frame {:?}: key `{key}` does not apply to a {} frame (keys: {listed})", f.name, f.kind),
                ));
            }
            if f.name == doc.root || index.insert(f.name.as_str(), k).is_some() {
                return Err(config(&span, alloc::format!("a frame named {:?} is already in the file", f.name)));
            }
        }
        // Every parent must be the root or a frame of the file.
        let parent_of = |f: &FrameDoc| -> Option<Option<usize>> {
            if f.parent == doc.root { Some(None) } else { index.get(f.parent.as_str()).map(|&p| Some(p)) }
        };
        for frame in &doc.frames {
            let f = frame.get_ref();
            if parent_of(f).is_none() {
                // The names a parent could be: every other frame's.
                let names = core::iter::once(doc.root.as_str())
                    .chain(doc.frames.iter().map(|g| g.get_ref().name.as_str()).filter(|n| *n != f.name));
                let e = super::tree::unknown_frame(&f.parent, names);
                return Err(config(&frame.span(), alloc::format!("frame {:?} names an unknown parent: {e}", f.name)));
            }
        }
        // Frames are added parents first, in the order of passes over the file: a pass adds,
        // in file order, each frame whose parent is already in the graph, so a frame listed
        // after its parent goes in the parent's pass and one listed before it in the next.
        // The pass of every frame follows from its parent's, reached from the root (a frame
        // never reached hangs below a loop of parents).
        let n = doc.frames.len();
        let mut children: Vec<Vec<usize>> = alloc::vec![Vec::new(); n];
        let mut roots = Vec::new();
        for (k, frame) in doc.frames.iter().enumerate() {
            match parent_of(frame.get_ref()).flatten() {
                None => roots.push(k),
                Some(p) => children[p].push(k),
            }
        }
        let mut pass = alloc::vec![usize::MAX; n];
        let mut stack: Vec<usize> = roots.iter().rev().copied().collect();
        for &k in &roots {
            pass[k] = 0;
        }
        while let Some(p) = stack.pop() {
            for &c in &children[p] {
                pass[c] = pass[p] + usize::from(c < p);
                stack.push(c);
            }
        }
        if let Some(first) = (0..n).find(|&k| pass[k] == usize::MAX) {
            // Follow the parent links from the first frame never reached to the loop.
            let mut chain: Vec<usize> = alloc::vec![first];
            let mut current = parent_of(doc.frames[first].get_ref()).flatten();
            while let Some(c) = current.filter(|c| !chain.contains(c)) {
                chain.push(c);
                current = parent_of(doc.frames[c].get_ref()).flatten();
            }
            let start = current.and_then(|c| chain.iter().position(|&k| k == c)).unwrap_or(0);
            let mut frames: Vec<String> = chain[start..].iter().map(|&k| doc.frames[k].get_ref().name.clone()).collect();
            frames.push(frames[0].clone());
            let message = GraphError::Cycle { frames }.to_string();
            return Err(config(&doc.frames[first].span(), message));
        }
        let mut order: Vec<usize> = (0..n).collect();
        order.sort_by_key(|&k| (pass[k], k));
        for k in order {
            let frame = &doc.frames[k];
            let (span, f) = (frame.span(), frame.get_ref());
            let added = match f.edge().map_err(|m| config(&span, alloc::format!("frame {:?}: {m}", f.name)))? {
                Some(edge) => graph.add_static(&f.name, &f.parent, edge),
                None => {
                    graph.declare(&f.name, &f.parent, if f.kind == "samples" { Declared::Samples } else { Declared::Function })
                }
            };
            added.map_err(|e| config(&span, e.to_string()))?;
        }
        Ok(graph)
    }
}
