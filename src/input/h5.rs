//! Thin, error-mapping layer over `hdf5-metno`: element-type classification,
//! attribute reading, whole and partial (hyperslab) reads with promotion of
//! float32 to float64 and finiteness checks.
//!
//! Complex numbers are a compound of two floats whose field names are one of the pairs of
//! [`COMPLEX_NAMES`] (`{r, i}` of h5py, `{real, imag}` of MATLAB v7.3, `{re, im}`, ...);
//! HDF5 converts compound members by name and float32 to float64 member by member on
//! reading, so every read lands in `f64` or [`c64`] ([`Stored`]). A compound with other
//! names is refused: HDF5 would leave the members it cannot match as zeros.

use crate::data::{c64, Field};
use crate::error::{Error, Result};
use hdf5::types::{FloatSize, TypeDescriptor};
use ndarray::Array2;
use serde::Serialize;
use std::ops::Range;
use std::path::Path;

/// Element type of a numerical dataset as stored in the file.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Element {
    /// IEEE single precision.
    Float32,
    /// IEEE double precision.
    Float64,
    /// Compound of two float32 (field names: one pair of [`COMPLEX_NAMES`]).
    Complex64,
    /// Compound of two float64 (field names: one pair of [`COMPLEX_NAMES`]).
    Complex128,
}

impl Element {
    /// Real or complex.
    pub fn field(self) -> Field {
        match self {
            Element::Float32 | Element::Float64 => Field::Real,
            Element::Complex64 | Element::Complex128 => Field::Complex,
        }
    }

    /// Bytes of one value in memory after promotion (8 real, 16 complex).
    pub fn value_bytes(self) -> usize {
        match self.field() {
            Field::Real => 8,
            Field::Complex => 16,
        }
    }
}

impl std::fmt::Display for Element {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(match self {
            Element::Float32 => "float32",
            Element::Float64 => "float64",
            Element::Complex64 => "complex (compound of two float32)",
            Element::Complex128 => "complex (compound of two float64)",
        })
    }
}

/// Maps an `hdf5` error to our one-line error about `dataset` of `file`.
pub fn h5err(file: &Path, dataset: &str, what: &str, e: hdf5::Error) -> Error {
    Error::dataset(file, dataset, format!("{what}: {e}"))
}

/// An error when the values of `ds` were never written: a contiguous dataset without
/// allocated storage, or a chunked one with fewer chunks stored than its declared shape
/// needs. Reading such a dataset gives fill values (zeros) where nothing was written, which
/// would be analysed as if they were data. Compact, virtual and externally stored datasets
/// are not checked.
pub fn require_written(file: &Path, path: &str, ds: &hdf5::Dataset) -> Result<()> {
    use hdf5::dataset::Layout;
    let shape = ds.shape();
    if shape.contains(&0) {
        return Ok(());
    }
    match ds.layout() {
        Layout::Contiguous => {
            let external = ds.dcpl().map(|p| !p.external().is_empty()).unwrap_or(true);
            if !external && ds.storage_size() == 0 {
                return Err(Error::dataset(
                    file,
                    path,
                    format!(
                        "declared shape {} but no value was ever written (the file stores none; reading would give fill values)",
                        format_shape(&shape)
                    ),
                ));
            }
        }
        Layout::Chunked => {
            let (Some(chunk), Some(stored)) = (ds.chunk(), ds.num_chunks()) else {
                return Ok(());
            };
            let expected: f64 = shape
                .iter()
                .zip(&chunk)
                .map(|(&s, &c)| (s as f64 / c.max(1) as f64).ceil())
                .product();
            if (stored as f64) < expected {
                return Err(Error::dataset(
                    file,
                    path,
                    format!(
                        "only {stored} of the {expected:.0} chunks of the declared shape {} were ever written (reading the rest would give fill values)",
                        format_shape(&shape)
                    ),
                ));
            }
        }
        _ => {}
    }
    Ok(())
}

/// Describes a type descriptor for an error message ("integer elements (int64)").
pub fn describe(desc: &TypeDescriptor) -> String {
    match desc {
        TypeDescriptor::Integer(_) | TypeDescriptor::Unsigned(_) => {
            format!("integer elements ({desc})")
        }
        TypeDescriptor::Boolean | TypeDescriptor::Enum(_) => {
            format!("boolean or enumeration elements ({desc})")
        }
        TypeDescriptor::FixedAscii(_)
        | TypeDescriptor::FixedUnicode(_)
        | TypeDescriptor::VarLenAscii
        | TypeDescriptor::VarLenUnicode => format!("string elements ({desc})"),
        TypeDescriptor::Compound(c) => {
            let names: Vec<&str> = c.fields.iter().map(|f| f.name.as_str()).collect();
            format!("a compound type with fields {{{}}}", names.join(", "))
        }
        other => format!("elements of type {other}"),
    }
}

/// Classifies the element type of `ds`: float32/64 or complex `{r, i}`; anything
/// else is an error saying what was found.
pub fn element(file: &Path, path: &str, ds: &hdf5::Dataset) -> Result<Element> {
    let desc = ds
        .dtype()
        .and_then(|t| t.to_descriptor())
        .map_err(|e| h5err(file, path, "unreadable element type", e))?;
    classify(&desc).ok_or_else(|| {
        Error::dataset(
            file,
            path,
            format!(
                "found {}; floating-point numbers (float32/float64) or complex compounds of two of them with fields {} are needed",
                describe(&desc),
                complex_names_list()
            ),
        )
    })
}

fn classify(desc: &TypeDescriptor) -> Option<Element> {
    match desc {
        TypeDescriptor::Float(FloatSize::U4) => Some(Element::Float32),
        TypeDescriptor::Float(FloatSize::U8) => Some(Element::Float64),
        TypeDescriptor::Compound(_) => {
            let (_, [re, im]) = complex_pair(desc)?;
            match (re, im) {
                (TypeDescriptor::Float(FloatSize::U4), TypeDescriptor::Float(FloatSize::U4)) => {
                    Some(Element::Complex64)
                }
                (TypeDescriptor::Float(_), TypeDescriptor::Float(_)) => Some(Element::Complex128),
                _ => None,
            }
        }
        _ => None,
    }
}

/// The field-name pairs `(real part, imaginary part)` of the complex compounds read (exact
/// spelling: HDF5 matches compound members by name): h5py and this tool's writer
/// `{r, i}`, MATLAB v7.3 `{real, imag}`, and the spellings of other writers.
pub const COMPLEX_NAMES: [(&str, &str); 6] = [
    ("r", "i"),
    ("real", "imag"),
    ("re", "im"),
    ("Re", "Im"),
    ("Real", "Imaginary"),
    ("real", "imaginary"),
];

/// `{r, i}, {real, imag}, ...` for messages.
fn complex_names_list() -> String {
    COMPLEX_NAMES
        .iter()
        .map(|(r, i)| format!("{{{r}, {i}}}"))
        .collect::<Vec<_>>()
        .join(", ")
}

/// The index in [`COMPLEX_NAMES`] of a two-field compound's names and the types of its
/// real and imaginary members; `None` for anything else.
fn complex_pair(desc: &TypeDescriptor) -> Option<(usize, [&TypeDescriptor; 2])> {
    let TypeDescriptor::Compound(c) = desc else {
        return None;
    };
    if c.fields.len() != 2 {
        return None;
    }
    let field = |n: &str| c.fields.iter().find(|f| f.name == n).map(|f| &f.ty);
    COMPLEX_NAMES
        .iter()
        .enumerate()
        .find_map(|(k, (r, i))| Some((k, [field(r)?, field(i)?])))
}

/// Declares a `#[repr(C)]` pair of `f64` with HDF5 member names `$re`, `$im`: the memory
/// type a compound with those names is read into before it is reinterpreted as [`c64`].
macro_rules! complex_layout {
    ($name:ident, $re:literal, $im:literal) => {
        #[derive(hdf5::H5Type, Clone, Copy, Default)]
        #[repr(C)]
        struct $name {
            #[hdf5(rename = $re)]
            re: f64,
            #[hdf5(rename = $im)]
            im: f64,
        }
    };
}
complex_layout!(RealImag, "real", "imag");
complex_layout!(ReIm, "re", "im");
complex_layout!(ReImCapital, "Re", "Im");
complex_layout!(RealImaginaryCapital, "Real", "Imaginary");
complex_layout!(RealImaginary, "real", "imaginary");

/// Reinterprets values of `P` (a [`complex_layout!`] pair: `#[repr(C)]` `{f64, f64}`) as
/// [`c64`] (`num_complex::Complex<f64>`, `#[repr(C)]` `{re, im}`) without a copy.
fn into_c64_vec<P: Copy>(v: Vec<P>) -> Vec<c64> {
    assert!(
        std::mem::size_of::<P>() == std::mem::size_of::<c64>()
            && std::mem::align_of::<P>() == std::mem::align_of::<c64>()
    );
    let mut v = std::mem::ManuallyDrop::new(v);
    // SAFETY: P and c64 have the same size and alignment (asserted) and are both two f64
    // in declaration order (`#[repr(C)]`), so the buffer holds valid c64 values; length
    // and capacity are those of the original allocation, which is not dropped.
    unsafe { Vec::from_raw_parts(v.as_mut_ptr().cast::<c64>(), v.len(), v.capacity()) }
}

/// [`into_c64_vec`] of a 2-D array (C order kept).
fn into_c64<P: Copy>(a: Array2<P>) -> Array2<c64> {
    let (r, c) = a.dim();
    let a = if a.is_standard_layout() {
        a
    } else {
        a.as_standard_layout().into_owned()
    };
    let (v, offset) = a.into_raw_vec_and_offset();
    debug_assert!(offset.unwrap_or(0) == 0);
    Array2::from_shape_vec((r, c), into_c64_vec(v)).expect("the shape of the array read")
}

/// The value types the readers land data in (`f64`, [`c64`]): a 2-D selection and a whole
/// dataset, read as stored (C order). A complex dataset is read through the memory type of
/// its field names ([`COMPLEX_NAMES`]).
pub trait Stored: hdf5::H5Type + Copy + Default + Send + Sync + std::fmt::Display {
    /// `ds[rows, cols]` of a 2-D dataset.
    fn read_2d(
        ds: &hdf5::Dataset,
        rows: Range<usize>,
        cols: Range<usize>,
    ) -> hdf5::Result<Array2<Self>>;
    /// Every value of `ds`, in C order.
    fn read_all(ds: &hdf5::Dataset) -> hdf5::Result<Vec<Self>>;
}

impl Stored for f64 {
    fn read_2d(
        ds: &hdf5::Dataset,
        rows: Range<usize>,
        cols: Range<usize>,
    ) -> hdf5::Result<Array2<f64>> {
        ds.read_slice_2d(ndarray::s![rows, cols])
    }
    fn read_all(ds: &hdf5::Dataset) -> hdf5::Result<Vec<f64>> {
        ds.read_raw()
    }
}

/// The index in [`COMPLEX_NAMES`] of the field names of `ds` (0, `{r, i}`, when it is no
/// complex compound: the read then fails with HDF5's own conversion error).
fn names_of(ds: &hdf5::Dataset) -> usize {
    ds.dtype()
        .and_then(|t| t.to_descriptor())
        .ok()
        .and_then(|d| complex_pair(&d).map(|(k, _)| k))
        .unwrap_or(0)
}

impl Stored for c64 {
    fn read_2d(
        ds: &hdf5::Dataset,
        rows: Range<usize>,
        cols: Range<usize>,
    ) -> hdf5::Result<Array2<c64>> {
        let sel = ndarray::s![rows, cols];
        match names_of(ds) {
            1 => ds.read_slice_2d::<RealImag, _>(sel).map(into_c64),
            2 => ds.read_slice_2d::<ReIm, _>(sel).map(into_c64),
            3 => ds.read_slice_2d::<ReImCapital, _>(sel).map(into_c64),
            4 => ds
                .read_slice_2d::<RealImaginaryCapital, _>(sel)
                .map(into_c64),
            5 => ds.read_slice_2d::<RealImaginary, _>(sel).map(into_c64),
            _ => ds.read_slice_2d::<c64, _>(sel),
        }
    }
    fn read_all(ds: &hdf5::Dataset) -> hdf5::Result<Vec<c64>> {
        match names_of(ds) {
            1 => ds.read_raw::<RealImag>().map(into_c64_vec),
            2 => ds.read_raw::<ReIm>().map(into_c64_vec),
            3 => ds.read_raw::<ReImCapital>().map(into_c64_vec),
            4 => ds.read_raw::<RealImaginaryCapital>().map(into_c64_vec),
            5 => ds.read_raw::<RealImaginary>().map(into_c64_vec),
            _ => ds.read_raw::<c64>(),
        }
    }
}

/// Opens attribute `name` of `loc` with its type and the path used in errors
/// (`"{path} (attribute {name})"`); `Ok(None)` when the attribute does not exist.
fn open_attr(
    file: &Path,
    path: &str,
    loc: &hdf5::Location,
    name: &str,
) -> Result<Option<(hdf5::Attribute, TypeDescriptor, String)>> {
    if !loc.attr_names().is_ok_and(|n| n.iter().any(|a| a == name)) {
        return Ok(None);
    }
    let apath = format!("{path} (attribute {name})");
    let attr = loc
        .attr(name)
        .map_err(|e| h5err(file, &apath, "cannot open", e))?;
    let desc = attr
        .dtype()
        .and_then(|t| t.to_descriptor())
        .map_err(|e| h5err(file, &apath, "unreadable type", e))?;
    Ok(Some((attr, desc, apath)))
}

/// An error unless the attribute `attr` (at `apath`) holds exactly one `what`.
fn expect_single(file: &Path, apath: &str, attr: &hdf5::Attribute, what: &str) -> Result<()> {
    if attr.size() == 1 {
        return Ok(());
    }
    Err(Error::dataset(
        file,
        apath,
        format!("expected a single {what}, found {} elements", attr.size()),
    ))
}

/// Reads a string attribute `name` of `loc` (variable or fixed length, ASCII or UTF-8).
/// `Ok(None)` when the attribute does not exist.
pub fn attr_string(
    file: &Path,
    path: &str,
    loc: &hdf5::Location,
    name: &str,
) -> Result<Option<String>> {
    use hdf5::types::{FixedAscii, FixedUnicode, VarLenAscii, VarLenUnicode};
    let Some((attr, desc, apath)) = open_attr(file, path, loc, name)? else {
        return Ok(None);
    };
    expect_single(file, &apath, &attr, "string")?;
    let read = |e: hdf5::Error| h5err(file, &apath, "cannot read", e);
    let s = match desc {
        TypeDescriptor::VarLenUnicode => attr
            .read_raw::<VarLenUnicode>()
            .map_err(read)?
            .first()
            .map(|s| s.as_str().to_string()),
        TypeDescriptor::VarLenAscii => attr
            .read_raw::<VarLenAscii>()
            .map_err(read)?
            .first()
            .map(|s| s.as_str().to_string()),
        TypeDescriptor::FixedAscii(n) if n <= 1024 => attr
            .read_raw::<FixedAscii<1024>>()
            .map_err(read)?
            .first()
            .map(|s| s.as_str().to_string()),
        TypeDescriptor::FixedUnicode(n) if n <= 1024 => attr
            .read_raw::<FixedUnicode<1024>>()
            .map_err(read)?
            .first()
            .map(|s| s.as_str().to_string()),
        other => {
            return Err(Error::dataset(
                file,
                &apath,
                format!("expected a string, found {}", describe(&other)),
            ))
        }
    };
    Ok(s.map(|s| s.trim_end_matches('\0').to_string()))
}

/// Most values read from one numeric attribute (ours hold one or two).
const MAX_ATTR_VALUES: usize = 1024;

/// Reads a non-negative integer attribute `name` (any integer type, or a float with
/// an integral value). `Ok(None)` when the attribute does not exist.
pub fn attr_count(
    file: &Path,
    path: &str,
    loc: &hdf5::Location,
    name: &str,
) -> Result<Option<usize>> {
    match attr_counts(file, path, loc, name)? {
        None => Ok(None),
        Some(v) if v.len() == 1 => Ok(Some(v[0])),
        Some(v) => Err(Error::dataset(
            file,
            format!("{path} (attribute {name})"),
            format!("expected a single number, found {} elements", v.len()),
        )),
    }
}

/// Reads a single finite number `name` (any integer or float type). `Ok(None)` when the
/// attribute does not exist.
pub fn attr_number(
    file: &Path,
    path: &str,
    loc: &hdf5::Location,
    name: &str,
) -> Result<Option<f64>> {
    let Some((attr, desc, apath)) = open_attr(file, path, loc, name)? else {
        return Ok(None);
    };
    expect_single(file, &apath, &attr, "number")?;
    let read = |e: hdf5::Error| h5err(file, &apath, "cannot read", e);
    let x = match desc {
        TypeDescriptor::Integer(_) | TypeDescriptor::Unsigned(_) | TypeDescriptor::Float(_) => {
            attr.read_raw::<f64>().map_err(read)?[0]
        }
        other => {
            return Err(Error::dataset(
                file,
                &apath,
                format!("expected a number, found {}", describe(&other)),
            ))
        }
    };
    if !x.is_finite() {
        return Err(Error::dataset(
            file,
            &apath,
            format!("expected a finite number, found {x}"),
        ));
    }
    Ok(Some(x))
}

/// Reads an attribute `name` holding non-negative integers (any integer type, or
/// floats with integral values). `Ok(None)` when the attribute does not exist.
pub fn attr_counts(
    file: &Path,
    path: &str,
    loc: &hdf5::Location,
    name: &str,
) -> Result<Option<Vec<usize>>> {
    let Some((attr, desc, apath)) = open_attr(file, path, loc, name)? else {
        return Ok(None);
    };
    if attr.size() > MAX_ATTR_VALUES {
        return Err(Error::dataset(
            file,
            &apath,
            format!(
                "declared shape {} holds {} values; a numeric attribute of ours holds at most {MAX_ATTR_VALUES}",
                format_shape(&attr.shape()),
                attr.size()
            ),
        ));
    }
    let read = |e: hdf5::Error| h5err(file, &apath, "cannot read", e);
    let bad = |v: String| {
        Error::dataset(
            file,
            &apath,
            format!("expected a non-negative integer, found {v}"),
        )
    };
    let out = match desc {
        TypeDescriptor::Integer(_) => attr
            .read_raw::<i64>()
            .map_err(read)?
            .into_iter()
            .map(|v| usize::try_from(v).map_err(|_| bad(v.to_string())))
            .collect::<Result<Vec<_>>>()?,
        TypeDescriptor::Unsigned(_) => attr
            .read_raw::<u64>()
            .map_err(read)?
            .into_iter()
            .map(|v| usize::try_from(v).map_err(|_| bad(v.to_string())))
            .collect::<Result<Vec<_>>>()?,
        TypeDescriptor::Float(_) => attr
            .read_raw::<f64>()
            .map_err(read)?
            .into_iter()
            .map(|v| {
                if v.is_finite() && v >= 0.0 && v.fract() == 0.0 && v < 1e15 {
                    Ok(v as usize)
                } else {
                    Err(bad(v.to_string()))
                }
            })
            .collect::<Result<Vec<_>>>()?,
        other => return Err(bad(describe(&other))),
    };
    Ok(Some(out))
}

/// Checks that `ds` holds integers (CSR `indices` and `indptr`).
pub fn require_integer(file: &Path, path: &str, ds: &hdf5::Dataset) -> Result<()> {
    let desc = ds
        .dtype()
        .and_then(|t| t.to_descriptor())
        .map_err(|e| h5err(file, path, "unreadable element type", e))?;
    match desc {
        TypeDescriptor::Integer(_) | TypeDescriptor::Unsigned(_) => Ok(()),
        other => Err(Error::dataset(
            file,
            path,
            format!("found {}; integers are needed", describe(&other)),
        )),
    }
}

/// Reads a whole integer dataset as non-negative indices. Unsigned data are read as
/// `u64` and signed data as `i64`, so that every value is reported as stored (HDF5 would
/// clip a `uint64` above 2⁶³ − 1 when converting it to `int64`).
pub fn read_indices(file: &Path, path: &str, ds: &hdf5::Dataset) -> Result<Vec<usize>> {
    let desc = ds
        .dtype()
        .and_then(|t| t.to_descriptor())
        .map_err(|e| h5err(file, path, "unreadable element type", e))?;
    let read = |e: hdf5::Error| h5err(file, path, "cannot read", e);
    let bad = |i: usize, x: String| {
        Error::dataset(
            file,
            path,
            format!("index {x} at position {i} is not a valid index (negative or beyond this machine's range)"),
        )
    };
    match desc {
        TypeDescriptor::Unsigned(_) => ds
            .read_raw::<u64>()
            .map_err(read)?
            .into_iter()
            .enumerate()
            .map(|(i, x)| usize::try_from(x).map_err(|_| bad(i, x.to_string())))
            .collect(),
        TypeDescriptor::Integer(_) => ds
            .read_raw::<i64>()
            .map_err(read)?
            .into_iter()
            .enumerate()
            .map(|(i, x)| usize::try_from(x).map_err(|_| bad(i, x.to_string())))
            .collect(),
        other => Err(Error::dataset(
            file,
            path,
            format!("found {}; integers are needed", describe(&other)),
        )),
    }
}

/// First non-finite entry of a real slice, as (index, value).
pub fn first_nonfinite_real(v: &[f64]) -> Option<(usize, f64)> {
    v.iter().position(|x| !x.is_finite()).map(|i| (i, v[i]))
}

/// First non-finite entry of a complex slice, as (index, value).
pub fn first_nonfinite_complex(v: &[c64]) -> Option<(usize, c64)> {
    v.iter()
        .position(|x| !(x.re.is_finite() && x.im.is_finite()))
        .map(|i| (i, v[i]))
}

/// Reads a whole dataset as real numbers (C order), rejecting NaN and Inf.
pub fn read_real(file: &Path, path: &str, ds: &hdf5::Dataset) -> Result<Vec<f64>> {
    let v = ds
        .read_raw::<f64>()
        .map_err(|e| h5err(file, path, "cannot read", e))?;
    if let Some((i, x)) = first_nonfinite_real(&v) {
        return Err(nonfinite(file, path, &ds.shape(), i, &x.to_string()));
    }
    Ok(v)
}

/// Reads a whole dataset as complex numbers (C order), rejecting NaN and Inf.
pub fn read_complex(file: &Path, path: &str, ds: &hdf5::Dataset) -> Result<Vec<c64>> {
    let v = c64::read_all(ds).map_err(|e| h5err(file, path, "cannot read", e))?;
    if let Some((i, x)) = first_nonfinite_complex(&v) {
        return Err(nonfinite(file, path, &ds.shape(), i, &x.to_string()));
    }
    Ok(v)
}

/// Error for a non-finite value at flat (C-order) index `flat` of a dataset of `shape`.
pub fn nonfinite(file: &Path, path: &str, shape: &[usize], flat: usize, value: &str) -> Error {
    Error::dataset(
        file,
        path,
        format!(
            "non-finite value {value} at index {}",
            format_index(shape, flat)
        ),
    )
}

/// `[i, j]` of a flat C-order index in `shape`.
pub fn format_index(shape: &[usize], flat: usize) -> String {
    let mut idx = vec![0usize; shape.len()];
    let mut rest = flat;
    for (k, &s) in shape.iter().enumerate().rev() {
        if s > 0 {
            idx[k] = rest % s;
            rest /= s;
        }
    }
    format!(
        "[{}]",
        idx.iter()
            .map(|i| i.to_string())
            .collect::<Vec<_>>()
            .join(", ")
    )
}

/// The length of a vector stored as `[n]`, `[1, n]` or `[n, 1]` (what column- and
/// row-major writers produce for a vector), or `None` for any other shape.
pub fn vector_len(shape: &[usize]) -> Option<usize> {
    match shape {
        [n] => Some(*n),
        [1, n] | [n, 1] => Some(*n),
        _ => None,
    }
}

/// A shape as `[a, b]`.
pub fn format_shape(shape: &[usize]) -> String {
    format!(
        "[{}]",
        shape
            .iter()
            .map(|i| i.to_string())
            .collect::<Vec<_>>()
            .join(", ")
    )
}

/// Bytes of the temporary buffer a slab read of [`read_transposed`] uses (about; at
/// least one chunk row or column).
pub const SLAB_BYTES: usize = 32 << 20;

/// Reads a whole 2-D dataset `X` of shape `[r, c]` (C order) as its transpose: a
/// column-major `c × r` matrix `M` with `M[j, i] = X[i, j]`, so that column `i` of `M`
/// is row `i` of `X`, copied as one contiguous run.
///
/// The dataset is read in slabs that never cut a chunk and hold each chunk in one
/// contiguous piece of memory: row slabs `X[i₀..i₁, :]` of about `slab_bytes`
/// ([`SLAB_BYTES`] by default; each a contiguous block of `M`) when the storage is
/// contiguous or chunks span whole rows, otherwise column slabs `X[:, j₀..j₁]` exactly
/// one chunk wide, whose rows land in `M` as runs of `j₁ − j₀` entries. Every chunk is
/// read once, no copy of the whole dataset in file order is made, and every value is
/// checked with `finite` (the first bad one is reported with its `[i, j]` index).
///
/// For a Hermitian operator `A` stored in C order, `M = Aᵀ = conj(A)`: the real
/// symmetric case needs no transposition at all.
pub fn read_transposed<T>(
    file: &Path,
    path: &str,
    ds: &hdf5::Dataset,
    slab_bytes: usize,
    finite: impl Fn(&T) -> bool,
) -> Result<faer::Mat<T>>
where
    T: Stored,
{
    let shape = ds.shape();
    let (r, c) = match shape.as_slice() {
        [r, c] => (*r, *c),
        _ => {
            return Err(Error::dataset(
                file,
                path,
                format!(
                    "expected a 2-D dataset, found shape {}",
                    format_shape(&shape)
                ),
            ))
        }
    };
    let elem = std::mem::size_of::<T>().max(1);
    let (cr, cc) = match ds.chunk().as_deref() {
        Some([a, b]) => ((*a).max(1), (*b).max(1)),
        _ => (1, c.max(1)),
    };
    let mut m = faer::Mat::from_fn(c, r, |_, _| T::default());
    let check = |block: &ndarray::Array2<T>, i0: usize, j0: usize| -> Result<()> {
        let w = block.ncols().max(1);
        let bad = match block.as_slice() {
            Some(v) if v.iter().fold(true, |ok, x| ok & finite(x)) => None,
            _ => block.iter().position(|x| !finite(x)),
        };
        match bad {
            None => Ok(()),
            Some(k) => Err(Error::dataset(
                file,
                path,
                format!(
                    "non-finite value {} at index [{}, {}]",
                    block
                        .iter()
                        .nth(k)
                        .map(|x| x.to_string())
                        .unwrap_or_default(),
                    i0 + k / w,
                    j0 + k % w
                ),
            )),
        }
    };
    let read = |sel: (std::ops::Range<usize>, std::ops::Range<usize>)| {
        let (a, b) = sel;
        T::read_2d(ds, a.clone(), b.clone()).map_err(|e| {
            h5err(
                file,
                path,
                &format!(
                    "cannot read [{}..{}, {}..{}]",
                    a.start, a.end, b.start, b.end
                ),
                e,
            )
        })
    };
    if r == 0 || c == 0 {
        return Ok(m);
    }
    // Every chunk must land in a contiguous part of the slab buffer, or HDF5 (1.10)
    // copies it row by row with one file read per row: row slabs when chunks span whole
    // rows (or storage is contiguous), otherwise column slabs exactly one chunk wide.
    if cc >= c {
        // row slabs: X[i0..i1, :] is, in C order, exactly the columns i0..i1 of M
        let step = cr * (slab_bytes / (cr * c * elem)).max(1);
        let mut i0 = 0;
        while i0 < r {
            let i1 = (i0 + step).min(r);
            let block = read((i0..i1, 0..c))?;
            check(&block, i0, 0)?;
            for (k, row) in block.rows().into_iter().enumerate() {
                for (d, &x) in m.col_as_slice_mut(i0 + k).iter_mut().zip(row.iter()) {
                    *d = x;
                }
            }
            i0 = i1;
        }
    } else {
        // column slabs on chunk boundaries: row i of X[:, j0..j1] is M[j0..j1, i]
        let step = cc;
        let mut j0 = 0;
        while j0 < c {
            let j1 = (j0 + step).min(c);
            let block = read((0..r, j0..j1))?;
            check(&block, 0, j0)?;
            use rayon::prelude::*;
            m.as_mut()
                .par_col_chunks_mut(64)
                .enumerate()
                .for_each(|(g, mut cols)| {
                    for k in 0..cols.ncols() {
                        let row = block.row(g * 64 + k);
                        let mut col = cols.as_mut().col_mut(k);
                        for (t, &x) in row.iter().enumerate() {
                            col[j0 + t] = x;
                        }
                    }
                });
            j0 = j1;
        }
    }
    Ok(m)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn index_formatting_is_c_order() {
        // common practice, no source: C (row-major) order of HDF5 datasets
        assert_eq!(format_index(&[3, 4], 7), "[1, 3]");
        assert_eq!(format_shape(&[100, 7]), "[100, 7]");
    }

    /// A scratch HDF5 file path unique to this test process and `tag`.
    fn scratch(tag: &str) -> std::path::PathBuf {
        std::env::temp_dir().join(format!("eigentherm-h5-{}-{tag}.h5", std::process::id()))
    }

    fn write_2d<T: hdf5::H5Type>(
        path: &Path,
        x: &ndarray::Array2<T>,
        chunk: Option<(usize, usize)>,
    ) -> hdf5::Result<()> {
        let f = hdf5::File::create(path)?;
        let b = f.new_dataset_builder();
        match chunk {
            Some(c) => b.chunk(c).with_data(x).create("x")?,
            None => b.with_data(x).create("x")?,
        };
        Ok(())
    }

    #[test]
    fn transposed_reads_are_exact_for_every_slab_direction() {
        // exact identity, no source needed: M[j, i] = X[i, j] is a copy, so equality is
        // bitwise; contiguous, row-chunked, column-chunked and tiled storage, with slab
        // sizes that force one slab per chunk row/column and one slab for everything.
        let (r, c) = (37, 53);
        let x = ndarray::Array2::from_shape_fn((r, c), |(i, j)| (i * 1000 + j) as f64 + 0.25);
        let z = ndarray::Array2::from_shape_fn((r, c), |(i, j)| c64::new(i as f64, -(j as f64)));
        for (k, chunk) in [None, Some((r, 8)), Some((5, c)), Some((6, 7))]
            .into_iter()
            .enumerate()
        {
            let p = scratch(&format!("t{k}"));
            write_2d(&p, &x, chunk).unwrap();
            let pz = scratch(&format!("z{k}"));
            write_2d(&pz, &z, chunk).unwrap();
            for slab in [1usize, 4096, SLAB_BYTES] {
                let f = hdf5::File::open(&p).unwrap();
                let m = read_transposed::<f64>(&p, "/x", &f.dataset("x").unwrap(), slab, |v| {
                    v.is_finite()
                })
                .unwrap();
                assert_eq!((m.nrows(), m.ncols()), (c, r));
                for i in 0..r {
                    for j in 0..c {
                        assert_eq!(
                            m[(j, i)],
                            x[[i, j]],
                            "chunk {chunk:?} slab {slab} [{i}, {j}]"
                        );
                    }
                }
                let fz = hdf5::File::open(&pz).unwrap();
                let mz =
                    read_transposed::<c64>(&pz, "/x", &fz.dataset("x").unwrap(), slab, |_| true)
                        .unwrap();
                for i in 0..r {
                    for j in 0..c {
                        assert_eq!(
                            mz[(j, i)],
                            z[[i, j]],
                            "complex, chunk {chunk:?} slab {slab}"
                        );
                    }
                }
            }
            let _ = std::fs::remove_file(&p);
            let _ = std::fs::remove_file(&pz);
        }
    }

    #[test]
    fn transposed_reads_name_the_first_non_finite_entry() {
        // common practice, no source: bad values are reported by their [i, j] index
        let (r, c) = (20, 30);
        let mut x = ndarray::Array2::from_elem((r, c), 1.0f64);
        x[[13, 17]] = f64::NAN;
        for (k, chunk) in [None, Some((r, 4))].into_iter().enumerate() {
            let p = scratch(&format!("nan{k}"));
            write_2d(&p, &x, chunk).unwrap();
            let f = hdf5::File::open(&p).unwrap();
            for slab in [1usize, SLAB_BYTES] {
                let e = read_transposed::<f64>(&p, "/x", &f.dataset("x").unwrap(), slab, |v| {
                    v.is_finite()
                })
                .unwrap_err()
                .to_string();
                assert!(
                    e.contains("/x") && e.contains("[13, 17]") && e.contains("NaN"),
                    "{e}"
                );
            }
            let _ = std::fs::remove_file(&p);
        }
    }
}
