//! Sector discovery: a recursive, depth-first walk (names sorted) over the groups
//! of a file; every group holding a dataset `energies` is a sector. Only metadata
//! (shapes, element types, attributes) is read here, and every shape is checked
//! against the number of energies `n` and the dimension `dim` so that problems
//! surface when the file is opened, not in the middle of an analysis.

use super::h5::{self, attr_count, attr_counts, attr_string, format_shape, Element};
use super::matlab;
use super::{Layout, LayoutSource, ObservableInfo, Overrides, Sector, StateInfo};
use crate::data::{Field, OperatorForm};
use crate::error::{Error, Result};
use hdf5::LocationType;
use std::collections::HashMap;
use std::path::Path;

/// Deepest group nesting followed.
const MAX_DEPTH: usize = 32;

/// Joins a group path and a member name (`"/" + "a"` → `"/a"`, `"/a" + "b"` → `"/a/b"`).
pub fn join(group: &str, name: &str) -> String {
    if group == "/" || group.is_empty() {
        format!("/{name}")
    } else {
        format!("{group}/{name}")
    }
}

/// Resolves an override path: absolute paths are used as given, relative ones are
/// taken inside `group`.
pub fn resolve(group: &str, path: &str) -> String {
    if path.starts_with('/') {
        path.to_string()
    } else {
        join(group, path)
    }
}

/// The type of the object at `path`; `Ok(None)` when no link of the path exists. A link
/// that exists but cannot be followed (a dangling soft link, an external link to a missing
/// file, a non-HDF5 file or a missing object) is an error naming that link: it never reads
/// as "not stored".
pub fn kind(file: &Path, f: &hdf5::File, path: &str) -> Result<Option<LocationType>> {
    if path == "/" {
        return Ok(Some(LocationType::Group));
    }
    // Follow the path link by link: opening through a missing group is an HDF5 error we do
    // not want to provoke, and a broken link must be named as such.
    let mut at = String::new();
    let mut found = None;
    for part in path.trim_start_matches('/').split('/') {
        let parent = if at.is_empty() {
            "/".to_string()
        } else {
            at.clone()
        };
        if found.is_some_and(|t| t != LocationType::Group) {
            return Ok(None);
        }
        let g = f
            .group(&parent)
            .map_err(|e| h5::h5err(file, &parent, "cannot open group", e))?;
        if !g.link_exists(part) {
            return Ok(None);
        }
        at = join(&parent, part);
        match f.loc_type_by_name(&at) {
            Ok(t) => found = Some(t),
            Err(_) => return Err(Error::dataset(file, &at, broken_link(&g, part))),
        }
    }
    Ok(found)
}

/// What is wrong with the link `name` of `g`, which exists but cannot be followed.
fn broken_link(g: &hdf5::Group, name: &str) -> String {
    use hdf5::{IndexType, IterationOrder, LinkType};
    let ty = g
        .links(IndexType::Name, IterationOrder::Native)
        .ok()
        .and_then(|l| l.into_iter().find(|(n, _)| n == name))
        .map(|(_, info)| info.link_type);
    match ty {
        Some(LinkType::Soft) => "dangling soft link: its target does not exist".into(),
        Some(LinkType::External) => "external link whose target cannot be opened (a missing file, not an HDF5 file, or no such object in it)".into(),
        _ => "link that cannot be followed".into(),
    }
}

/// Where the data of `ds` live when that is another file than `f` (the dataset was
/// reached through an external link): `"OTHER_FILE:/path"`.
pub fn external_origin(f: &hdf5::File, ds: &hdf5::Dataset) -> Option<String> {
    let here = f.filename();
    let there = ds.filename();
    (there != here).then(|| format!("{there}:{}", ds.name()))
}

/// Sector name of a group path: without the leading `/`, or `"/"` for the root.
pub fn sector_name(group: &str) -> String {
    let t = group.trim_start_matches('/');
    if t.is_empty() {
        "/".to_string()
    } else {
        t.to_string()
    }
}

/// All sectors of `f`, in depth-first order with sorted names. An absolute energies path
/// given on the command line defines a single sector (the group holding it); a relative
/// one replaces the name `energies`: every group holding a dataset at that path is a sector.
pub fn discover(file: &Path, f: &hdf5::File, ov: &Overrides) -> Result<Vec<Sector>> {
    let relative = match &ov.energies {
        Some(e) if e.starts_with('/') => {
            let epath = e.clone();
            if kind(file, f, &epath)? != Some(LocationType::Dataset) {
                return Err(Error::dataset(
                    file,
                    &epath,
                    "missing dataset (given as the energies path)",
                ));
            }
            let group = match epath.rfind('/') {
                Some(0) | None => "/".to_string(),
                Some(k) => epath[..k].to_string(),
            };
            let mat = matlab::is_mat73(file);
            return Ok(vec![describe(file, f, &group, &epath, ov, mat)?]);
        }
        Some(e) => e.trim_end_matches('/').to_string(),
        None => "energies".to_string(),
    };
    let mat = matlab::is_mat73(file);
    let mut groups = Vec::new();
    let mut visited = Visited::default();
    visited.first(f, "/");
    walk(file, f, "/", &relative, 0, &mut visited, &mut groups)?;
    visited.warn(file);
    if groups.is_empty() {
        return Err(Error::file(
            file,
            if ov.energies.is_some() {
                format!(
                    "no sector found: no group holds a dataset at '{}' (given as the energies path)",
                    crate::error::escape(&relative)
                )
            } else {
                "no sector found: no group holds a dataset named 'energies' (use --energies-path for another layout)".to_string()
            },
        ));
    }
    groups
        .iter()
        .map(|g| describe(file, f, g, &join(g, &relative), ov, mat))
        .collect()
}

/// Names inside a sector group that are never searched for further sectors.
const SECTOR_MEMBERS: [&str; 5] = [
    "energies",
    "eigenvectors",
    "observables",
    "states",
    "hamiltonian",
];

/// Groups already walked, by object address, so that link cycles and second names of one
/// group are walked once; the links skipped for that reason, as (link, first path).
#[derive(Default)]
struct Visited {
    seen: HashMap<(u64, String), String>,
    skipped: Vec<(String, String)>,
}

impl Visited {
    /// True the first time the group at `path` is seen (by its address in its file).
    fn first(&mut self, f: &hdf5::File, path: &str) -> bool {
        let Ok(info) = f.loc_info_by_name(path) else {
            return false;
        };
        let key = (info.fileno, format!("{:?}", info.token));
        match self.seen.get(&key) {
            Some(first) => {
                self.skipped.push((path.to_string(), first.clone()));
                false
            }
            None => {
                self.seen.insert(key, path.to_string());
                true
            }
        }
    }

    /// One warning for all the links skipped.
    fn warn(&self, file: &Path) {
        let Some((link, first)) = self.skipped.first() else {
            return;
        };
        let more = match self.skipped.len() {
            1 => String::new(),
            k => format!(" and {} more", k - 1),
        };
        crate::progress::warn(&format!(
            "{}: {link}: leads to the group already searched as {first}{more} (a link cycle or a second name of one group); not searched again",
            file.display()
        ));
    }
}

/// Depth-first search for sectors below `group` (already marked visited).
fn walk(
    file: &Path,
    f: &hdf5::File,
    group: &str,
    energies: &str,
    depth: usize,
    visited: &mut Visited,
    out: &mut Vec<String>,
) -> Result<()> {
    if depth > MAX_DEPTH {
        return Ok(());
    }
    let g = f
        .group(group)
        .map_err(|e| h5::h5err(file, group, "cannot open group", e))?;
    let first = energies.split('/').next().unwrap_or(energies);
    let is_sector = g.link_exists(first)
        && kind(file, f, &join(group, energies))? == Some(LocationType::Dataset);
    if is_sector {
        out.push(group.to_string());
    }
    let mut names = g
        .member_names()
        .map_err(|e| h5::h5err(file, group, "cannot list members", e))?;
    names.sort();
    for name in names {
        if is_sector && (SECTOR_MEMBERS.contains(&name.as_str()) || name == first) {
            continue;
        }
        let child = join(group, &name);
        // Unreadable links (dangling soft or external links) outside sectors are skipped.
        if f.loc_type_by_name(&child).ok() == Some(LocationType::Group) && visited.first(f, &child)
        {
            walk(file, f, &child, energies, depth + 1, visited, out)?;
        }
    }
    Ok(())
}

fn open_ds(file: &Path, f: &hdf5::File, path: &str) -> Result<hdf5::Dataset> {
    match kind(file, f, path)? {
        Some(LocationType::Dataset) => f
            .dataset(path)
            .map_err(|e| h5::h5err(file, path, "cannot open dataset", e)),
        Some(_) => Err(Error::dataset(
            file,
            path,
            "expected a dataset, found a group",
        )),
        None => Err(Error::dataset(file, path, "missing dataset")),
    }
}

/// Reads the metadata of the sector whose group is `group` and whose energies are at `epath`.
fn describe(
    file: &Path,
    f: &hdf5::File,
    group: &str,
    epath: &str,
    ov: &Overrides,
    mat: bool,
) -> Result<Sector> {
    let (n, eel) = describe_energies(file, f, epath)?;
    let v = describe_vectors(file, f, group, n, ov, mat)?;
    let mut observables = describe_observables(file, f, group, v.dim, n, ov)?;
    let mut hamiltonian = describe_hamiltonian(file, f, group, v.dim, n, ov)?;
    if mat {
        // MATLAB writes column-major: every 2-D dataset holds the transpose
        for o in observables.iter_mut().chain(hamiltonian.as_mut()) {
            o.column_major |= matches!(o.form, OperatorForm::Dense | OperatorForm::EnergyBasis);
        }
    }
    let state_info = describe_states(file, f, group, v.dim, ov)?;
    let Vectors {
        path: vpath,
        dim,
        element,
        layout,
        layout_source,
        chunk,
        filters,
    } = v;
    let gobj = f
        .group(group)
        .map_err(|e| h5::h5err(file, group, "cannot open group", e))?;
    let mut size = attr_count(file, group, &gobj, "size")?;
    let mut label = attr_string(file, group, &gobj, "label")?;
    let mut model = attr_string(file, group, &gobj, "model")?;
    let mut symmetry_class = attr_string(file, group, &gobj, "symmetry_class")?;
    let (mut realization, mut disorder) = match &ov.ensemble_by {
        crate::input::EnsembleBy::Off => (None, None),
        crate::input::EnsembleBy::Attribute(name) => (
            attr_count(file, group, &gobj, "realization")?,
            h5::attr_number(file, group, &gobj, name)?,
        ),
    };
    for a in ov.attributes.iter().filter(|a| a.applies_to(file)) {
        let v = a.value.clone();
        let before = match a.name.as_str() {
            "size" => std::mem::replace(&mut size, v.parse().ok()).map(|x| x.to_string()),
            "model" => model.replace(v.clone()),
            "label" => label.replace(v.clone()),
            "symmetry_class" => symmetry_class.replace(v.clone()),
            "realization" if ov.ensemble_by != crate::input::EnsembleBy::Off => {
                std::mem::replace(&mut realization, v.parse().ok()).map(|x| x.to_string())
            }
            "disorder" if ov.ensemble_by == crate::input::EnsembleBy::default() => {
                std::mem::replace(&mut disorder, v.parse().ok()).map(|x| x.to_string())
            }
            _ => None,
        };
        if let Some(b) = before.filter(|b| b != &v) {
            crate::progress::note(&format!(
                "{}: sector '{}': attribute {} = {} replaced by --attribute {}={}",
                file.display(),
                sector_name(group),
                a.name,
                crate::error::escape(&b),
                a.name,
                crate::error::escape(&v)
            ));
        }
    }
    let basis = describe_basis(&gobj);

    let mut sector = Sector {
        name: sector_name(group),
        group: group.to_string(),
        n_states: n,
        dim,
        field: element.map(Element::field),
        layout,
        layout_source,
        states: state_info.iter().map(|s| s.name.clone()).collect(),
        has_hamiltonian: hamiltonian.is_some(),
        observables,
        size,
        label,
        model,
        symmetry_class,
        realization,
        disorder,
        basis,
        energies_path: epath.to_string(),
        energies_element: eel,
        eigenvectors_path: vpath,
        element,
        chunk,
        filters,
        hamiltonian,
        state_info,
        external: Vec::new(),
    };
    sector.external = external_members(file, f, &sector);
    Ok(sector)
}

/// The members of a sector reached through external links, as `"PATH -> OTHER_FILE:/path"`,
/// each with a warning: their data are read (read-only) from another file.
fn external_members(file: &Path, f: &hdf5::File, s: &Sector) -> Vec<String> {
    let mut paths = vec![s.energies_path.clone()];
    paths.extend(s.eigenvectors_path.iter().cloned());
    for o in s.observables.iter().chain(&s.hamiltonian) {
        paths.push(match o.form {
            OperatorForm::Csr => join(&o.path, "data"),
            _ => o.path.clone(),
        });
    }
    paths.extend(s.state_info.iter().map(|st| st.path.clone()));
    let mut out = Vec::new();
    for p in paths {
        let Some(origin) = f.dataset(&p).ok().and_then(|ds| external_origin(f, &ds)) else {
            continue;
        };
        crate::progress::warn(&format!(
            "{}: {p}: an external link: the data are read (read-only) from {origin}",
            file.display()
        ));
        out.push(format!("{p} -> {origin}"));
    }
    out
}

/// The energies dataset: 1-D, real, non-empty; its length and element type.
fn describe_energies(file: &Path, f: &hdf5::File, epath: &str) -> Result<(usize, Element)> {
    let eds = open_ds(file, f, epath)?;
    let eshape = eds.shape();
    let Some(n) = h5::vector_len(&eshape) else {
        return Err(Error::dataset(
            file,
            epath,
            format!(
                "expected a 1-D dataset ([n], or [1, n] / [n, 1]), found shape {}",
                format_shape(&eshape)
            ),
        ));
    };
    let eel = h5::element(file, epath, &eds)?;
    if eel.field() == Field::Complex {
        return Err(Error::dataset(
            file,
            epath,
            format!("energies must be real, found {eel}"),
        ));
    }
    if n == 0 {
        return Err(Error::dataset(file, epath, "no energies (empty dataset)"));
    }

    Ok((n, eel))
}

/// What discovery learns of a sector's eigenvectors.
struct Vectors {
    path: Option<String>,
    dim: Option<usize>,
    element: Option<Element>,
    layout: Layout,
    layout_source: LayoutSource,
    chunk: Option<Vec<usize>>,
    filters: Vec<String>,
}

/// The eigenvector dataset of a sector of `n` states, when there is one: its layout,
/// dimension, element type, chunking and filters, with the shape checked against `n`.
fn describe_vectors(
    file: &Path,
    f: &hdf5::File,
    group: &str,
    n: usize,
    ov: &Overrides,
    mat: bool,
) -> Result<Vectors> {
    let vpath = match &ov.eigenvectors {
        Some(p) => Some(resolve(group, p)),
        None => {
            let p = join(group, "eigenvectors");
            kind(file, f, &p)?.map(|_| p)
        }
    };
    let (layout, layout_source) = match ov.layout {
        Some(l) => (l, LayoutSource::Option),
        None if mat => (Layout::Rows, LayoutSource::MatFile),
        None => (Layout::Columns, LayoutSource::Assumed),
    };
    let mut v = Vectors {
        path: vpath.clone(),
        dim: None,
        element: None,
        layout,
        layout_source,
        chunk: None,
        filters: Vec::new(),
    };
    if let Some(vp) = &vpath {
        let ds = open_ds(file, f, vp)?;
        let el = h5::element(file, vp, &ds)?;
        if let Some(l) = layout_attribute(file, vp, &ds)? {
            v.layout = l;
            v.layout_source = LayoutSource::Attribute;
        }
        let shape = ds.shape();
        if shape.len() != 2 {
            return Err(Error::dataset(
                file,
                vp,
                format!(
                    "expected a 2-D dataset, found shape {}",
                    format_shape(&shape)
                ),
            ));
        }
        let (d, nv) = match v.layout {
            Layout::Columns => (shape[0], shape[1]),
            Layout::Rows => (shape[1], shape[0]),
        };
        if nv != n {
            let hint = if shape[0] == n && v.layout == Layout::Columns {
                " (stored as rows? set attribute layout = \"rows\" or pass --layout rows)"
            } else if shape[1] == n && v.layout == Layout::Rows {
                " (stored as columns? remove attribute layout = \"rows\" or pass --layout columns)"
            } else {
                ""
            };
            let axes = match v.layout {
                Layout::Columns => "[dim, n]",
                Layout::Rows => "[n, dim]",
            };
            return Err(Error::dataset(
                file,
                vp,
                format!(
                    "shape {} does not match {n} energies (layout {axes}){hint}",
                    format_shape(&shape)
                ),
            ));
        }
        if n > d {
            return Err(Error::dataset(
                file,
                vp,
                format!("{n} eigenvectors cannot be orthonormal in dimension {d}"),
            ));
        }
        if shape[0] != shape[1] && v.layout_source == LayoutSource::Assumed {
            // only one reading matches the number of energies
            v.layout_source = LayoutSource::Shape;
        }
        v.dim = Some(d);
        v.element = Some(el);
        v.chunk = ds.chunk();
        v.filters = ds.filters().iter().map(filter_name).collect();
    }
    Ok(v)
}

/// The attribute `layout` of the eigenvector dataset, when it has one.
fn layout_attribute(file: &Path, vp: &str, ds: &hdf5::Dataset) -> Result<Option<Layout>> {
    match attr_string(file, vp, ds, "layout")?.as_deref() {
        None => Ok(None),
        Some("rows") => Ok(Some(Layout::Rows)),
        Some("columns") => Ok(Some(Layout::Columns)),
        Some(other) => Err(Error::dataset(
            file,
            vp,
            format!(
                "attribute layout = \"{}\" is neither \"rows\" nor \"columns\"",
                crate::error::escape(other)
            ),
        )),
    }
}

/// The observables of a sector (under `observables/`, sorted by name, then those given by
/// path on the command line).
fn describe_observables(
    file: &Path,
    f: &hdf5::File,
    group: &str,
    dim: Option<usize>,
    n: usize,
    ov: &Overrides,
) -> Result<Vec<ObservableInfo>> {
    let mut observables = Vec::new();
    let opath = join(group, "observables");
    match kind(file, f, &opath)? {
        Some(LocationType::Group) => {
            let g = f
                .group(&opath)
                .map_err(|e| h5::h5err(file, &opath, "cannot open group", e))?;
            let mut names = g
                .member_names()
                .map_err(|e| h5::h5err(file, &opath, "cannot list members", e))?;
            names.sort();
            for name in names {
                let p = join(&opath, &name);
                observables.push(probe_operator(file, f, &name, &p, dim, n, true)?);
            }
        }
        Some(_) => {
            return Err(Error::dataset(
                file,
                &opath,
                "expected a group of observables, found a dataset",
            ))
        }
        None => {}
    }
    for (name, p) in &ov.observables {
        let p = resolve(group, p);
        if kind(file, f, &p)?.is_none() {
            return Err(Error::dataset(
                file,
                &p,
                format!("missing dataset (observable '{name}')"),
            ));
        }
        observables.retain(|o: &ObservableInfo| &o.name != name);
        observables.push(probe_operator(file, f, name, &p, dim, n, true)?);
    }

    Ok(observables)
}

/// The Hamiltonian of a sector, when one is stored (or given by path).
fn describe_hamiltonian(
    file: &Path,
    f: &hdf5::File,
    group: &str,
    dim: Option<usize>,
    n: usize,
    ov: &Overrides,
) -> Result<Option<ObservableInfo>> {
    let hpath = match &ov.hamiltonian {
        Some(p) => {
            let p = resolve(group, p);
            if kind(file, f, &p)?.is_none() {
                return Err(Error::dataset(
                    file,
                    &p,
                    "missing dataset (given as the hamiltonian path)",
                ));
            }
            Some(p)
        }
        None => {
            let p = join(group, "hamiltonian");
            kind(file, f, &p)?.map(|_| p)
        }
    };
    match &hpath {
        Some(p) => Ok(Some(probe_operator(
            file,
            f,
            "hamiltonian",
            p,
            dim,
            n,
            false,
        )?)),
        None => Ok(None),
    }
}

/// The stored initial states of a sector (under `states/`, sorted by name), each `[dim]`.
/// The stored states of a sector: the members of `states/`, then the `--state-path`
/// overrides (which replace a member of the same name). A relative override path missing
/// in a sector is skipped there (the state is then unknown in that sector); an absolute
/// one must exist.
fn describe_states(
    file: &Path,
    f: &hdf5::File,
    group: &str,
    dim: Option<usize>,
    ov: &Overrides,
) -> Result<Vec<StateInfo>> {
    let mut state_info = Vec::new();
    let spath = join(group, "states");
    if kind(file, f, &spath)? == Some(LocationType::Group) {
        let g = f
            .group(&spath)
            .map_err(|e| h5::h5err(file, &spath, "cannot open group", e))?;
        let mut names = g
            .member_names()
            .map_err(|e| h5::h5err(file, &spath, "cannot list members", e))?;
        names.sort();
        for name in names {
            let p = join(&spath, &name);
            state_info.push(describe_state(file, f, name, p, dim)?);
        }
    }
    for (name, given) in &ov.states {
        let p = resolve(group, given);
        if kind(file, f, &p)?.is_none() {
            if given.starts_with('/') {
                return Err(Error::dataset(
                    file,
                    &p,
                    format!("missing dataset (state '{name}', --state-path)"),
                ));
            }
            continue;
        }
        state_info.retain(|s: &StateInfo| &s.name != name);
        state_info.push(describe_state(file, f, name.clone(), p, dim)?);
    }
    Ok(state_info)
}

/// One stored state at `p`: a `[dim]` vector (or `[1, dim]`, `[dim, 1]`) of floats or
/// complex numbers.
fn describe_state(
    file: &Path,
    f: &hdf5::File,
    name: String,
    p: String,
    dim: Option<usize>,
) -> Result<StateInfo> {
    let ds = open_ds(file, f, &p)?;
    let el = h5::element(file, &p, &ds)?;
    let shape = ds.shape();
    let len = h5::vector_len(&shape);
    let ok = len.is_some_and(|l| dim.is_none_or(|d| l == d));
    if !ok {
        return Err(Error::dataset(
            file,
            &p,
            format!(
                "shape {} is not [dim]{}",
                format_shape(&shape),
                dim.map(|d| format!(" = [{d}]")).unwrap_or_default()
            ),
        ));
    }
    Ok(StateInfo {
        name,
        field: el.field(),
        element: el,
        path: p,
    })
}

fn filter_name(f: &hdf5::filters::Filter) -> String {
    use hdf5::filters::Filter;
    match f {
        Filter::Deflate(l) => format!("gzip (level {l})"),
        Filter::Shuffle => "shuffle".into(),
        Filter::Fletcher32 => "fletcher32".into(),
        Filter::SZip(..) => "szip".into(),
        Filter::NBit => "nbit".into(),
        Filter::ScaleOffset(_) => "scale-offset".into(),
        Filter::User(id, _) => format!("filter {id}"),
    }
}

/// Determines the storage form, element type and shape of the operator at `path`
/// and checks the shape against `dim` (computational basis) or `n` (energy basis).
fn probe_operator(
    file: &Path,
    f: &hdf5::File,
    name: &str,
    path: &str,
    dim: Option<usize>,
    n: usize,
    energy_basis_allowed: bool,
) -> Result<ObservableInfo> {
    match kind(file, f, path)? {
        Some(LocationType::Dataset) => {
            probe_dataset_operator(file, f, name, path, dim, n, energy_basis_allowed)
        }
        Some(LocationType::Group) => probe_csr_operator(file, f, name, path, dim),
        _ => Err(Error::dataset(file, path, "missing dataset")),
    }
}

/// An error unless `[rows, cols]` equals the expected shape (when one is known).
fn want_shape(
    file: &Path,
    path: &str,
    (rows, cols): (usize, usize),
    expect: Option<(usize, usize)>,
    what: &str,
) -> Result<()> {
    match expect {
        Some((r, c)) if (r, c) != (rows, cols) => Err(Error::dataset(
            file,
            path,
            format!("shape [{rows}, {cols}] does not match {what} [{r}, {c}]"),
        )),
        _ => Ok(()),
    }
}

/// An error unless the 2-D `shape` is `[dim, dim]` (when the dimension is known) and square.
fn want_square(file: &Path, path: &str, shape: &[usize], dim: Option<usize>) -> Result<()> {
    want_shape(
        file,
        path,
        (shape[0], shape[1]),
        dim.map(|d| (d, d)),
        "the eigenvector dimension",
    )?;
    if shape[0] != shape[1] {
        return Err(Error::dataset(
            file,
            path,
            format!("shape {} is not square", format_shape(shape)),
        ));
    }
    Ok(())
}

/// [`probe_operator`] for a dataset: diagonal `[dim]`, dense `[dim, dim]` or, with
/// attribute `basis = "energy"`, `[n, n]` in the energy eigenbasis.
fn probe_dataset_operator(
    file: &Path,
    f: &hdf5::File,
    name: &str,
    path: &str,
    dim: Option<usize>,
    n: usize,
    energy_basis_allowed: bool,
) -> Result<ObservableInfo> {
    let ds = open_ds(file, f, path)?;
    let el = h5::element(file, path, &ds)?;
    let mut shape = ds.shape();
    let basis = attr_string(file, path, &ds, "basis")?;
    // a diagonal written as [1, dim] or [dim, 1] (column- or row-major writers)
    if shape.len() == 2 && (shape[0] == 1) != (shape[1] == 1) && basis.as_deref() != Some("energy")
    {
        shape = vec![shape[0] * shape[1]];
    }
    let form =
        match (shape.len(), basis.as_deref()) {
            (1, None | Some("computational")) => {
                if let Some(d) = dim {
                    if shape[0] != d {
                        return Err(Error::dataset(
                            file,
                            path,
                            format!(
                                "shape [{}] does not match the dimension {d} of the eigenvectors",
                                shape[0]
                            ),
                        ));
                    }
                }
                OperatorForm::Diagonal
            }
            (2, None | Some("computational")) => {
                want_square(file, path, &shape, dim)?;
                OperatorForm::Dense
            }
            (2, Some("energy")) if energy_basis_allowed => {
                want_shape(
                    file,
                    path,
                    (shape[0], shape[1]),
                    Some((n, n)),
                    "the number of energies",
                )?;
                OperatorForm::EnergyBasis
            }
            (_, Some(b)) if b != "energy" && b != "computational" => {
                return Err(Error::dataset(
                    file,
                    path,
                    format!(
                        "attribute basis = \"{b}\" is neither \"energy\" nor \"computational\""
                    ),
                ))
            }
            _ => {
                return Err(Error::dataset(
                    file,
                    path,
                    format!(
                    "shape {} is not an operator: expected [dim] (diagonal), [dim, dim] (dense){}",
                    format_shape(&shape),
                    if energy_basis_allowed { " or [n, n] with basis = \"energy\"" } else { "" }
                ),
                ))
            }
        };
    Ok(ObservableInfo {
        name: name.to_string(),
        form,
        field: el.field(),
        path: path.to_string(),
        element: el,
        shape,
        support: attr_string(file, path, &ds, "observable_support")?,
        column_major: false,
    })
}

/// Member names of a sparse group: SciPy's CSR `{data, indices, indptr}` (attribute
/// `shape`), or MATLAB's compressed columns `{data, ir, jc}` (attribute `MATLAB_sparse`),
/// see [`matlab`].
struct CsrNames {
    indices: &'static str,
    indptr: &'static str,
    column_major: bool,
}

impl CsrNames {
    fn of(g: &hdf5::Group) -> CsrNames {
        let matlab = !g.link_exists("indices")
            && g.link_exists("ir")
            && g.attr_names()
                .is_ok_and(|a| a.iter().any(|n| n == matlab::SPARSE_ATTRIBUTE));
        if matlab {
            CsrNames {
                indices: "ir",
                indptr: "jc",
                column_major: true,
            }
        } else {
            CsrNames {
                indices: "indices",
                indptr: "indptr",
                column_major: false,
            }
        }
    }
}

/// [`probe_operator`] for a CSR group `{data, indices, indptr}` with attribute `shape`.
fn probe_csr_operator(
    file: &Path,
    f: &hdf5::File,
    name: &str,
    path: &str,
    dim: Option<usize>,
) -> Result<ObservableInfo> {
    let g = f
        .group(path)
        .map_err(|e| h5::h5err(file, path, "cannot open group", e))?;
    let names = CsrNames::of(&g);
    for part in ["data", names.indices, names.indptr] {
        if kind(file, f, &join(path, part))? != Some(LocationType::Dataset) {
            return Err(Error::dataset(
                file,
                join(path, part),
                if names.column_major {
                    "missing dataset (a MATLAB sparse group needs data, ir, jc; an all-zero sparse matrix stores none: store it dense)"
                } else {
                    "missing dataset (a CSR group needs data, indices, indptr and attribute shape)"
                },
            ));
        }
    }
    let shape = if names.column_major {
        // compressed columns of A read as compressed rows of Aᵀ: as many "rows" as jc has
        // entries minus one; square operators only, so shape is [c, c]
        let rows = attr_count(file, path, &g, matlab::SPARSE_ATTRIBUTE)?.unwrap_or(0);
        let jc = open_ds(file, f, &join(path, "jc"))?;
        let cols = jc.size().saturating_sub(1);
        vec![cols, rows]
    } else {
        attr_counts(file, path, &g, "shape")?.ok_or_else(|| {
            Error::dataset(
                file,
                path,
                "CSR group without attribute shape = [rows, cols]",
            )
        })?
    };
    if shape.len() != 2 {
        return Err(Error::dataset(
            file,
            path,
            format!("attribute shape has {} entries, expected 2", shape.len()),
        ));
    }
    want_square(file, path, &shape, dim)?;
    let dpath = join(path, "data");
    let data = open_ds(file, f, &dpath)?;
    let el = h5::element(file, &dpath, &data)?;
    if data.ndim() != 1 {
        return Err(Error::dataset(
            file,
            &dpath,
            format!(
                "expected a 1-D dataset of values, found shape {}",
                format_shape(&data.shape())
            ),
        ));
    }
    let nnz = data.size();
    let ipath = join(path, names.indices);
    let idx = open_ds(file, f, &ipath)?;
    h5::require_integer(file, &ipath, &idx)?;
    if idx.size() != nnz || idx.ndim() != 1 {
        return Err(Error::dataset(
            file,
            &ipath,
            format!(
                "shape {} does not match {nnz} values in data",
                format_shape(&idx.shape())
            ),
        ));
    }
    let ppath = join(path, names.indptr);
    let ptr = open_ds(file, f, &ppath)?;
    h5::require_integer(file, &ppath, &ptr)?;
    // shape[0] + 1 computed without overflow: a shape attribute of 2⁶⁴ − 1 rows cannot match
    let rows_plus_one = shape[0].checked_add(1);
    if Some(ptr.size()) != rows_plus_one || ptr.ndim() != 1 {
        return Err(Error::dataset(
            file,
            &ppath,
            format!(
                "shape {} does not match {} rows (expected [{}])",
                format_shape(&ptr.shape()),
                shape[0],
                rows_plus_one.map_or_else(|| format!("{} + 1", shape[0]), |r| r.to_string())
            ),
        ));
    }
    Ok(ObservableInfo {
        name: name.to_string(),
        form: OperatorForm::Csr,
        field: el.field(),
        path: path.to_string(),
        element: el,
        shape,
        support: attr_string(file, path, &g, "observable_support")?,
        column_major: names.column_major,
    })
}

/// The `basis` dataset of a sector group in words (`[dim] uint64`), `None` when absent or
/// not a readable dataset (only shown by `inspect`; readers check it themselves).
fn describe_basis(g: &hdf5::Group) -> Option<String> {
    if !g.link_exists("basis") {
        return None;
    }
    let d = g.dataset("basis").ok()?;
    let ty = d.dtype().ok()?.to_descriptor().ok()?;
    let shape: Vec<String> = d.shape().iter().map(|x| x.to_string()).collect();
    Some(format!("[{}] {}", shape.join(", "), h5::describe(&ty)))
}
