//! Projector checked against a NumPy reference: `fixtures/projection/projection.json`,
//! written by `scripts/make_projection_fixture.py` with NumPy 2.4.6 and SciPy 1.17.1
//! (V_Wᴴ A V_W with `numpy` matrix products, CSR built by `scipy.sparse.csr_matrix`).

use eigentherm::data::{c64, Csr, Matrix, OpData, Operator};
use eigentherm::project::{project_window, Budget};
use faer::Mat;
use serde_json::Value;

fn load() -> Value {
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/fixtures/projection/projection.json"
    );
    let text = std::fs::read_to_string(path).expect("fixture present");
    serde_json::from_str(&text).expect("fixture is JSON")
}

fn f64s(v: &Value) -> Vec<f64> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect()
}

fn cmat(v: &Value) -> Mat<c64> {
    let re: Vec<Vec<f64>> = v["re"].as_array().unwrap().iter().map(f64s).collect();
    let im: Vec<Vec<f64>> = v["im"].as_array().unwrap().iter().map(f64s).collect();
    Mat::from_fn(re.len(), re[0].len(), |i, j| c64::new(re[i][j], im[i][j]))
}

fn cvec(v: &Value) -> Vec<c64> {
    f64s(&v["re"])
        .into_iter()
        .zip(f64s(&v["im"]))
        .map(|(r, i)| c64::new(r, i))
        .collect()
}

fn usizes(v: &Value) -> Vec<usize> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_u64().unwrap() as usize)
        .collect()
}

#[test]
fn matches_numpy_reference() {
    let fx = load();
    let dim = fx["dim"].as_u64().unwrap() as usize;
    let w = usizes(&fx["window"]);
    for case in fx["cases"].as_array().unwrap() {
        let complex = case["complex"].as_bool().unwrap();
        let v = cmat(&case["vectors"]);
        let dense = cmat(&case["dense"]);
        let csr = Csr {
            nrows: dim,
            ncols: dim,
            indptr: usizes(&case["csr"]["indptr"]),
            indices: usizes(&case["csr"]["indices"]),
            data: cvec(&case["csr"]["data"]),
        };
        let diag = f64s(&case["diagonal"]);
        let (src, ops) = if complex {
            (
                Matrix::Complex(v),
                vec![
                    Operator::Real(OpData::Diagonal(diag)),
                    Operator::Complex(OpData::Dense(dense)),
                    Operator::Complex(OpData::Csr(csr)),
                ],
            )
        } else {
            let re = |m: &Mat<c64>| Mat::from_fn(m.nrows(), m.ncols(), |i, j| m[(i, j)].re);
            (
                Matrix::Real(re(&v)),
                vec![
                    Operator::Real(OpData::Diagonal(diag)),
                    Operator::Real(OpData::Dense(re(&dense))),
                    Operator::Real(OpData::Csr(Csr {
                        nrows: dim,
                        ncols: dim,
                        indptr: csr.indptr.clone(),
                        indices: csr.indices.clone(),
                        data: csr.data.iter().map(|x| x.re).collect(),
                    })),
                ],
            )
        };
        let refs: Vec<&Operator> = ops.iter().collect();
        for opts in [
            Budget::new(1 << 30),
            Budget {
                block: Some(3),
                ..Budget::new(1 << 30)
            },
        ] {
            let got = project_window(&src, &refs, w[0]..w[1], &opts).unwrap();
            for (name, g) in ["diagonal", "dense", "csr"].iter().zip(&got) {
                let expect = cmat(&case["projected"][*name]);
                let mut err: f64 = 0.0;
                for i in 0..expect.nrows() {
                    for j in 0..expect.ncols() {
                        err = err.max((g.get_c(i, j) - expect[(i, j)]).norm());
                    }
                }
                // agreement to rounding of two independent implementations
                // source: the NumPy 2.4.6 / SciPy 1.17.1 reference products of the fixture agree to rounding
                assert!(err < 1e-12, "complex {complex}, {name}: deviation {err:e}");
            }
        }
    }
}
