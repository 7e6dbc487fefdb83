//! Thin, error-mapping layer over `hdf5-metno`: element-type classification,
//! attribute reading, whole and partial (hyperslab) reads with promotion of
//! float32 to float64 and finiteness checks.
//!
//! Complex numbers are the compound `{r, i}` of two floats; HDF5 converts
//! `{r: float32, i: float32}` to `{r: float64, i: float64}` member by member
//! on reading, so every read lands in `f64` or [`c64`].

use crate::data::{c64, Field};
use crate::error::{Error, Result};
use hdf5::types::{FloatSize, TypeDescriptor};
use serde::Serialize;
use std::path::Path;

/// Element type of a numerical dataset as stored in the file.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Element {
    /// IEEE single precision.
    Float32,
    /// IEEE double precision.
    Float64,
    /// Compound `{r, i}` of two float32.
    Complex64,
    /// Compound `{r, i}` of two float64.
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
}

impl std::fmt::Display for Element {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(match self {
            Element::Float32 => "float32",
            Element::Float64 => "float64",
            Element::Complex64 => "complex {r, i} of float32",
            Element::Complex128 => "complex {r, i} of float64",
        })
    }
}

/// Maps an `hdf5` error to our one-line error about `dataset` of `file`.
pub fn h5err(file: &Path, dataset: &str, what: &str, e: hdf5::Error) -> Error {
    Error::dataset(file, dataset, format!("{what}: {e}"))
}

/// Describes a type descriptor for an error message ("integer elements (int64)").
fn describe(desc: &TypeDescriptor) -> String {
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
                "found {}; floating-point numbers (float32/float64) or complex {{r, i}} compounds of them are needed",
                describe(&desc)
            ),
        )
    })
}

fn classify(desc: &TypeDescriptor) -> Option<Element> {
    match desc {
        TypeDescriptor::Float(FloatSize::U4) => Some(Element::Float32),
        TypeDescriptor::Float(FloatSize::U8) => Some(Element::Float64),
        TypeDescriptor::Compound(c) if c.fields.len() == 2 => {
            let r = c.fields.iter().find(|f| f.name == "r")?;
            let i = c.fields.iter().find(|f| f.name == "i")?;
            match (&r.ty, &i.ty) {
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
    if attr.size() != 1 {
        return Err(Error::dataset(
            file,
            &apath,
            format!("expected a single string, found {} elements", attr.size()),
        ));
    }
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

/// Reads a whole integer dataset as non-negative indices.
pub fn read_indices(file: &Path, path: &str, ds: &hdf5::Dataset) -> Result<Vec<usize>> {
    require_integer(file, path, ds)?;
    let v = ds
        .read_raw::<i64>()
        .map_err(|e| h5err(file, path, "cannot read", e))?;
    v.into_iter()
        .enumerate()
        .map(|(i, x)| {
            usize::try_from(x).map_err(|_| {
                Error::dataset(file, path, format!("negative index {x} at position {i}"))
            })
        })
        .collect()
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
    let v = ds
        .read_raw::<c64>()
        .map_err(|e| h5err(file, path, "cannot read", e))?;
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn index_formatting_is_c_order() {
        // common practice, no source: C (row-major) order of HDF5 datasets
        assert_eq!(format_index(&[3, 4], 7), "[1, 3]");
        assert_eq!(format_shape(&[100, 7]), "[100, 7]");
    }
}
