//! The operators of a sector and the column source they need, with the memory check of
//! the operators held whole.

use crate::data::{ColumnSource, Operator, OperatorForm};
use crate::error::{Error, Result};
use crate::input::{EigenFile, Sector};
use crate::project::{human_bytes, NoVectors};

/// Named operators of a sector with the column source they need.
pub type SectorOperators = (Vec<(String, Operator)>, Box<dyn ColumnSource>);

/// The operators named `names` (every observable of the sector when empty) and the
/// column source they need: the eigenvector reader, or [`NoVectors`] when every operator
/// is stored in the energy basis and no eigenvectors are stored.
///
/// Dense and energy-basis operators are held in memory whole (`rows·cols·s` bytes for
/// elements of `s` bytes); when together they exceed `budget_bytes` (the `--memory`
/// budget) nothing is read and the error names the largest of them.
pub fn load_sector(
    file: &EigenFile,
    sector: &Sector,
    names: &[String],
    energies: &crate::data::Spectrum,
    budget_bytes: usize,
) -> Result<SectorOperators> {
    let names: Vec<String> = if names.is_empty() {
        sector.observables.iter().map(|o| o.name.clone()).collect()
    } else {
        names.to_vec()
    };
    if names.is_empty() {
        return Err(Error::dataset(
            file.path(),
            sector.group.clone(),
            "the sector has no observables (give one with --observable-path NAME=PATH)",
        ));
    }
    check_dense_fit(file, sector, &names, budget_bytes)?;
    let ops = names
        .iter()
        .map(|n| file.observable(sector, n).map(|op| (n.clone(), op)))
        .collect::<Result<Vec<_>>>()?;
    let all_energy = ops
        .iter()
        .all(|(_, o)| o.form() == OperatorForm::EnergyBasis);
    let src: Box<dyn ColumnSource> = if all_energy && sector.dim.is_none() {
        Box::new(NoVectors { n: energies.len() })
    } else {
        Box::new(file.vectors(sector, energies)?)
    };
    Ok((ops, src))
}

/// Fails when the dense and energy-basis observables among `names` need more memory,
/// held whole, than the budget (see [`load_sector`]).
fn check_dense_fit(
    file: &EigenFile,
    sector: &Sector,
    names: &[String],
    budget_bytes: usize,
) -> Result<()> {
    let whole: Vec<(&crate::input::ObservableInfo, f64)> = sector
        .observables
        .iter()
        .filter(|o| names.contains(&o.name))
        .filter(|o| matches!(o.form, OperatorForm::Dense | OperatorForm::EnergyBasis))
        .map(|o| {
            let elem = match o.field {
                crate::data::Field::Real => 8.0,
                crate::data::Field::Complex => 16.0,
            };
            (o, o.shape.iter().map(|&x| x as f64).product::<f64>() * elem)
        })
        .collect();
    let total: f64 = whole.iter().map(|(_, b)| b).sum();
    if total <= budget_bytes as f64 {
        return Ok(());
    }
    let Some((big, bytes)) = whole.iter().max_by(|a, b| a.1.total_cmp(&b.1)) else {
        return Ok(());
    };
    let shape: Vec<String> = big.shape.iter().map(|x| x.to_string()).collect();
    Err(Error::dataset(
        file.path(),
        big.path.clone(),
        format!(
            "{} observable of shape {} needs {} in memory ({} for all observables held whole), more than the memory budget {}: give a larger --memory, or store it in CSR or diagonal form",
            big.form,
            shape.join("×"),
            human_bytes(*bytes),
            human_bytes(total),
            human_bytes(budget_bytes as f64)
        ),
    ))
}
