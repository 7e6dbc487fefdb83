//! The streaming projector through an HDF5 file and the eigenvector reader, with a
//! tiny memory budget (many blocks, cut on the file's chunk boundaries), against the
//! in-memory projection of the same data in one block. Correctness only, no timing.

use eigentherm::data::{ColumnSource, Matrix, Operator};
use eigentherm::input::{EigenFile, Overrides};
use eigentherm::linalg::eigh_real;
use eigentherm::model::rmt;
use eigentherm::project::{
    for_each_block_timed, project_diagonal, project_diagonal_timed, project_window, Budget,
    StageTiming,
};
use faer::Mat;
use ndarray::{Array1, Array2};

const DIM: usize = 150;
const CHUNK: usize = 16;

struct Data {
    e: Vec<f64>,
    v: Mat<f64>,
}

/// Writes a GOE eigenbasis (chunked `[DIM, CHUNK]` column layout) with a dense, a CSR
/// and a diagonal observable.
fn write(path: &std::path::Path) -> Data {
    let mut r = rmt::rng(7);
    let (e, v) = eigh_real(rmt::goe(DIM, &mut r).as_ref()).unwrap();
    let dense = rmt::goe(DIM, &mut r);
    let f = crate::util::create_h5(path);
    f.new_dataset_builder()
        .with_data(&Array1::from(e.clone()))
        .create("energies")
        .unwrap();
    let vv = Array2::from_shape_fn((DIM, DIM), |(i, j)| v[(i, j)]);
    f.new_dataset_builder()
        .chunk((DIM, CHUNK))
        .with_data(&vv)
        .create("eigenvectors")
        .unwrap();
    let g = f.create_group("observables").unwrap();
    let diag = Array1::from_shape_fn(DIM, |i| ((i * 7) % 5) as f64 - 2.0);
    g.new_dataset_builder()
        .with_data(&diag)
        .create("occ")
        .unwrap();
    let dd = Array2::from_shape_fn((DIM, DIM), |(i, j)| dense[(i, j)]);
    g.new_dataset_builder()
        .with_data(&dd)
        .create("dense")
        .unwrap();
    // symmetric hopping i <-> i+1 and i <-> i+3 with varying amplitudes
    let (mut indptr, mut indices, mut data) = (vec![0i64], Vec::new(), Vec::new());
    for i in 0..DIM {
        for j in 0..DIM {
            let d = i.abs_diff(j);
            if d == 1 || d == 3 {
                indices.push(j as i64);
                data.push(0.5 + 0.01 * (i + j) as f64);
            }
        }
        indptr.push(indices.len() as i64);
    }
    let h = g.create_group("hop").unwrap();
    h.new_dataset_builder()
        .with_data(&Array1::from(data))
        .create("data")
        .unwrap();
    h.new_dataset_builder()
        .with_data(&Array1::from(indices))
        .create("indices")
        .unwrap();
    h.new_dataset_builder()
        .with_data(&Array1::from(indptr))
        .create("indptr")
        .unwrap();
    h.new_attr::<i64>()
        .shape(2)
        .create("shape")
        .unwrap()
        .write(&[DIM as i64, DIM as i64])
        .unwrap();
    Data { e, v }
}

#[test]
fn streaming_through_the_file_matches_in_memory() {
    // The same matrix elements whatever the block cut (exact up to rounding:
    // common practice, no source).
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("chunked.h5");
    let data = write(&path);
    let file = EigenFile::open(&path, &Overrides::default()).unwrap();
    let sector = file.select(None).unwrap()[0];
    let spectrum = file.spectrum(sector).unwrap();
    assert_eq!(spectrum.energies, data.e);
    // one chunk column per HDF5 read: blocks are assembled from several pieces
    let reader = file.vectors(sector, &spectrum).unwrap();
    assert_eq!(reader.chunk_states(), Some(CHUNK));
    let names = ["dense", "hop", "occ"];
    let ops: Vec<Operator> = names
        .iter()
        .map(|n| file.observable(sector, n).unwrap())
        .collect();
    let refs: Vec<&Operator> = ops.iter().collect();
    let memory = Matrix::Real(data.v.clone());
    let big = Budget::new(1 << 30);
    // (4 + 3)·150·8·b + 3·8·b² ≤ 300 000 gives b = 33, cut to 32 = 2 chunks
    let tiny = Budget::new(300_000);
    let window = 30..135;

    let want = project_window(&memory, &refs, window.clone(), &big).unwrap();
    let mut got: Vec<Mat<f64>> = refs.iter().map(|_| Mat::zeros(105, 105)).collect();
    let mut timing = StageTiming::default();
    let mut starts = Vec::new();
    for_each_block_timed(&reader, &refs, window.clone(), &tiny, &mut timing, |blk| {
        if blk.is_diagonal() {
            starts.push(blk.rows.start);
        }
        for (g, m) in got.iter_mut().zip(&blk.elements) {
            let Matrix::Real(m) = m else {
                panic!("real data gave complex elements")
            };
            for j in 0..blk.cols.len() {
                for i in 0..blk.rows.len() {
                    let (a, b) = (blk.rows.start - 30 + i, blk.cols.start - 30 + j);
                    g[(a, b)] = m[(i, j)];
                    g[(b, a)] = m[(i, j)];
                }
            }
        }
        Ok(())
    })
    .unwrap();
    // many blocks, cut on chunk boundaries after the first
    assert_eq!(timing.block_states, 32);
    assert_eq!(starts, vec![30, 48, 80, 112]);
    assert_eq!(timing.blocks, 4);
    for (k, (g, w)) in got.iter().zip(&want).enumerate() {
        let Matrix::Real(w) = w else {
            panic!("real data gave complex elements")
        };
        let diff = (0..105)
            .flat_map(|i| (0..105).map(move |j| (i, j)))
            .map(|(i, j)| (g[(i, j)] - w[(i, j)]).abs())
            .fold(0.0f64, f64::max);
        assert!(diff < 1e-12, "{}: max difference {diff:e}", names[k]);
    }

    // diagonal elements of all states, streamed in blocks from the file
    let want_d = project_diagonal(&memory, &refs, 0..DIM, &big).unwrap();
    let mut t2 = StageTiming::default();
    let got_d = project_diagonal_timed(&reader, &refs, 0..DIM, &tiny, &mut t2).unwrap();
    assert!(t2.blocks > 1, "{t2:?}");
    for (k, (g, w)) in got_d.iter().zip(&want_d).enumerate() {
        let diff = g
            .iter()
            .zip(w)
            .map(|(a, b)| (a - b).abs())
            .fold(0.0f64, f64::max);
        assert!(diff < 1e-12, "{}: max difference {diff:e}", names[k]);
    }
    // and they equal the diagonal of the window matrix
    for (d, w) in want_d.iter().zip(&want) {
        let Matrix::Real(w) = w else {
            panic!("real data gave complex elements")
        };
        for i in 0..105 {
            assert!((d[30 + i] - w[(i, i)]).abs() < 1e-12);
        }
    }
    // a read across many chunks equals the stored columns
    let Matrix::Real(all) = reader.read(5..DIM).unwrap() else {
        panic!("real data gave complex columns")
    };
    for j in 0..DIM - 5 {
        for i in 0..DIM {
            assert_eq!(all[(i, j)], data.v[(i, j + 5)]);
        }
    }
}

#[test]
fn dense_operators_load_exactly_whatever_the_storage() {
    // Exact identity, no source needed: loading is a copy, so the operator read back
    // equals the one written, bitwise — real symmetric and complex Hermitian (the
    // loader reads the C-order dataset as its transpose, conj(A) for a Hermitian A,
    // and conjugates back), contiguous and chunked by columns, rows or tiles.
    use eigentherm::data::{c64, OpData};
    const D: usize = 40;
    let mut r = rmt::rng(11);
    let sym = rmt::goe(D, &mut r);
    let herm = Array2::from_shape_fn((D, D), |(i, j)| {
        let (a, b) = (i.min(j) as f64, i.max(j) as f64);
        let im = if i < j {
            0.1 * (a + 2.0 * b)
        } else if i > j {
            -0.1 * (a + 2.0 * b)
        } else {
            0.0
        };
        c64::new((a * b).sin(), im)
    });
    let dir = tempfile::tempdir().unwrap();
    let chunks = [None, Some((D, 4)), Some((3, D)), Some((7, 6))];
    for (k, chunk) in chunks.into_iter().enumerate() {
        let path = dir.path().join(format!("ops{k}.h5"));
        {
            let f = crate::util::create_h5(&path);
            let e = Array1::from_shape_fn(D, |i| i as f64);
            f.new_dataset_builder()
                .with_data(&e)
                .create("energies")
                .unwrap();
            let v = Array2::from_shape_fn((D, D), |(i, j)| if i == j { 1.0 } else { 0.0 });
            f.new_dataset_builder()
                .with_data(&v)
                .create("eigenvectors")
                .unwrap();
            let g = f.create_group("observables").unwrap();
            let s = Array2::from_shape_fn((D, D), |(i, j)| sym[(i, j)]);
            let (b1, b2) = (g.new_dataset_builder(), g.new_dataset_builder());
            match chunk {
                Some(c) => {
                    b1.chunk(c).with_data(&s).create("sym").unwrap();
                    b2.chunk(c).with_data(&herm).create("herm").unwrap();
                }
                None => {
                    b1.with_data(&s).create("sym").unwrap();
                    b2.with_data(&herm).create("herm").unwrap();
                }
            }
        }
        let file = EigenFile::open(&path, &Overrides::default()).unwrap();
        let sector = file.select(None).unwrap()[0];
        match file.observable(sector, "sym").unwrap() {
            Operator::Real(OpData::Dense(m)) => {
                for j in 0..D {
                    for i in 0..D {
                        assert_eq!(m[(i, j)], sym[(i, j)], "chunk {chunk:?}");
                    }
                }
            }
            other => panic!("expected a real dense operator, got {other:?}"),
        }
        match file.observable(sector, "herm").unwrap() {
            Operator::Complex(OpData::Dense(m)) => {
                for j in 0..D {
                    for i in 0..D {
                        assert_eq!(m[(i, j)], herm[[i, j]], "chunk {chunk:?} [{i}, {j}]");
                    }
                }
            }
            other => panic!("expected a complex dense operator, got {other:?}"),
        }
    }
}
