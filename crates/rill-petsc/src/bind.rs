//! Safe wrappers over the C shim.

use std::ffi::{c_char, c_int, CStr, CString};
use std::fmt;

#[repr(C)]
struct RawSystem {
    _private: [u8; 0],
}

extern "C" {
    fn rp_init(user_options: *const c_char) -> c_int;
    fn rp_finalize() -> c_int;
    fn rp_rank() -> c_int;
    fn rp_size() -> c_int;
    fn rp_abort(code: c_int);
    fn rp_error_text(code: c_int) -> *const c_char;
    fn rp_sum(buf: *mut f64, n: i64) -> c_int;
    fn rp_max(buf: *mut f64, n: i64) -> c_int;
    fn rp_bcast(buf: *mut f64, n: i64) -> c_int;
    fn rp_gather(send: *const f64, n: i64, recv: *mut f64) -> c_int;
    fn rp_peak_rss_kib() -> i64;
    fn rp_index_bytes() -> c_int;
    fn rp_system_create(
        n_local: i64,
        n_global: i64,
        d_nnz: *const i64,
        o_nnz: *const i64,
        out: *mut *mut RawSystem,
    ) -> c_int;
    fn rp_system_range(s: *const RawSystem, start: *mut i64, end: *mut i64) -> c_int;
    fn rp_system_reads(s: *mut RawSystem, n: i64, global: *const i64) -> c_int;
    fn rp_system_zero(s: *mut RawSystem) -> c_int;
    fn rp_system_add_row(
        s: *mut RawSystem,
        row: i64,
        ncols: i64,
        cols: *const i64,
        vals: *const f64,
    ) -> c_int;
    fn rp_system_add_rhs(s: *mut RawSystem, row: i64, value: f64) -> c_int;
    fn rp_system_solve(
        s: *mut RawSystem,
        rtol: f64,
        max_it: i64,
        its: *mut i64,
        reason: *mut c_int,
    ) -> c_int;
    fn rp_system_solution(s: *mut RawSystem, out: *mut f64) -> c_int;
    fn rp_system_destroy(s: *mut RawSystem);
}

/// A PETSc or MPI call that failed, with what rill was doing.
#[derive(Debug, Clone)]
pub struct Error {
    /// What rill asked for.
    pub doing: &'static str,
    /// PETSc's (or MPI's) error code.
    pub code: i32,
    /// PETSc's text for the code.
    pub text: String,
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "PETSc failed while {}: {} (error {})",
            self.doing, self.text, self.code
        )
    }
}

impl std::error::Error for Error {}

fn check(code: c_int, doing: &'static str) -> Result<(), Error> {
    if code == 0 {
        return Ok(());
    }
    // SAFETY: rp_error_text returns a static NUL-terminated string.
    let text = unsafe { CStr::from_ptr(rp_error_text(code)) }
        .to_string_lossy()
        .into_owned();
    Err(Error { doing, code, text })
}

fn len(n: usize) -> i64 {
    i64::try_from(n).expect("a length fits in i64")
}

/// PETSc (and MPI) started in this process; ended when dropped. Start it
/// once per process, before any other call.
pub struct Petsc {
    rank: usize,
    size: usize,
}

impl Petsc {
    /// Starts PETSc with `options` (PETSc's own `-name value` syntax, as on
    /// its command line) over rill's defaults; options in the environment
    /// variable `PETSC_OPTIONS` are read too.
    pub fn init(options: &str) -> Result<Petsc, Error> {
        let opts = CString::new(options).map_err(|_| Error {
            doing: "reading the PETSc options",
            code: -1,
            text: "the options contain a NUL byte".into(),
        })?;
        // SAFETY: a valid C string; PETSc copies what it keeps.
        check(unsafe { rp_init(opts.as_ptr()) }, "starting")?;
        // SAFETY: PETSc is initialised.
        let (rank, size) = unsafe { (rp_rank(), rp_size()) };
        Ok(Petsc {
            rank: rank as usize,
            size: size as usize,
        })
    }

    /// This process's rank, from 0.
    pub fn rank(&self) -> usize {
        self.rank
    }

    /// The number of ranks.
    pub fn size(&self) -> usize {
        self.size
    }

    /// Width of PETSc's index type in this build, bytes (4 or 8).
    pub fn index_bytes(&self) -> usize {
        // SAFETY: no arguments.
        unsafe { rp_index_bytes() as usize }
    }

    /// Sums `values` over all ranks, in place (every rank gets the sums).
    pub fn sum(&self, values: &mut [f64]) -> Result<(), Error> {
        // SAFETY: the pointer and length describe `values`.
        check(
            unsafe { rp_sum(values.as_mut_ptr(), len(values.len())) },
            "summing over ranks",
        )
    }

    /// Takes the largest of `values` over all ranks, in place.
    pub fn max(&self, values: &mut [f64]) -> Result<(), Error> {
        // SAFETY: the pointer and length describe `values`.
        check(
            unsafe { rp_max(values.as_mut_ptr(), len(values.len())) },
            "taking a maximum over ranks",
        )
    }

    /// Copies rank 0's `values` to every rank.
    pub fn broadcast(&self, values: &mut [f64]) -> Result<(), Error> {
        // SAFETY: the pointer and length describe `values`.
        check(
            unsafe { rp_bcast(values.as_mut_ptr(), len(values.len())) },
            "broadcasting",
        )
    }

    /// Every rank's `values` one after the other, in rank order, on rank 0;
    /// an empty vector elsewhere.
    pub fn gather(&self, values: &[f64]) -> Result<Vec<f64>, Error> {
        let mut total = [values.len() as f64];
        self.sum(&mut total)?;
        let mut out = if self.rank == 0 {
            vec![0.0; total[0] as usize]
        } else {
            Vec::new()
        };
        // SAFETY: `out` holds the total on rank 0 and is not read elsewhere.
        check(
            unsafe { rp_gather(values.as_ptr(), len(values.len()), out.as_mut_ptr()) },
            "gathering results on rank 0",
        )?;
        Ok(out)
    }

    /// Ends the run on every rank at once (after a failure on this one).
    pub fn abort(&self, code: i32) -> ! {
        // SAFETY: MPI_Abort does not return.
        unsafe { rp_abort(code) };
        std::process::exit(code)
    }

    /// Peak resident memory of this process, bytes (`None` if unknown).
    pub fn peak_memory_bytes(&self) -> Option<u64> {
        // SAFETY: no arguments.
        let kib = unsafe { rp_peak_rss_kib() };
        (kib >= 0).then(|| kib as u64 * 1024)
    }
}

impl Drop for Petsc {
    fn drop(&mut self) {
        // SAFETY: started in `init`; nothing of PETSc outlives this (a
        // `System` borrows the `Petsc` it was made with).
        unsafe { rp_finalize() };
    }
}

/// A distributed sparse linear system: this rank owns the rows
/// [`System::range`]; values may be added to any row from any rank.
pub struct System<'p> {
    raw: *mut RawSystem,
    _petsc: &'p Petsc,
}

impl<'p> System<'p> {
    /// A system of `n_global` rows of which this rank owns `n_local`
    /// (ranks own consecutive ranges in rank order), with at most
    /// `d_nnz[i]` entries of owned row `i` in owned columns and `o_nnz[i]`
    /// in the others.
    pub fn new(
        petsc: &'p Petsc,
        n_local: usize,
        n_global: usize,
        d_nnz: &[usize],
        o_nnz: &[usize],
    ) -> Result<System<'p>, Error> {
        assert_eq!(d_nnz.len(), n_local);
        assert_eq!(o_nnz.len(), n_local);
        let d: Vec<i64> = d_nnz.iter().map(|&v| len(v)).collect();
        let o: Vec<i64> = o_nnz.iter().map(|&v| len(v)).collect();
        let mut raw = std::ptr::null_mut();
        // SAFETY: the slices hold n_local entries each; `raw` receives the system.
        let code = unsafe {
            rp_system_create(
                len(n_local),
                len(n_global),
                d.as_ptr(),
                o.as_ptr(),
                &mut raw,
            )
        };
        let sys = System { raw, _petsc: petsc };
        check(code, "creating the distributed matrix")?;
        Ok(sys)
    }

    /// The global rows this rank owns.
    pub fn range(&self) -> std::ops::Range<usize> {
        let (mut s, mut e) = (0i64, 0i64);
        // SAFETY: a live system.
        unsafe { rp_system_range(self.raw, &mut s, &mut e) };
        s as usize..e as usize
    }

    /// Sets the global indices whose solution values [`System::solution`]
    /// returns on this rank, in this order.
    pub fn reads(&mut self, global: &[usize]) -> Result<(), Error> {
        let g: Vec<i64> = global.iter().map(|&v| len(v)).collect();
        // SAFETY: pointer and length describe `g`.
        check(
            unsafe { rp_system_reads(self.raw, len(g.len()), g.as_ptr()) },
            "setting up the solution's scatter",
        )
    }

    /// Zeroes the matrix and the right-hand side (the pattern stays).
    pub fn zero(&mut self) -> Result<(), Error> {
        // SAFETY: a live system.
        check(unsafe { rp_system_zero(self.raw) }, "zeroing the system")
    }

    /// Adds `vals` at (`row`, `cols`).
    pub fn add_row(&mut self, row: usize, cols: &[i64], vals: &[f64]) -> Result<(), Error> {
        assert_eq!(cols.len(), vals.len());
        // SAFETY: both slices hold cols.len() entries.
        check(
            unsafe {
                rp_system_add_row(
                    self.raw,
                    len(row),
                    len(cols.len()),
                    cols.as_ptr(),
                    vals.as_ptr(),
                )
            },
            "adding matrix values",
        )
    }

    /// Adds `value` to the right-hand side at `row`.
    pub fn add_rhs(&mut self, row: usize, value: f64) -> Result<(), Error> {
        // SAFETY: a live system.
        check(
            unsafe { rp_system_add_rhs(self.raw, len(row), value) },
            "adding right-hand side values",
        )
    }

    /// Assembles what every rank added and solves from zero to the relative
    /// residual `rtol` (at most `max_iterations`): the iteration count, or
    /// PETSc's reason for stopping when it did not converge.
    pub fn solve(
        &mut self,
        rtol: f64,
        max_iterations: usize,
    ) -> Result<Result<usize, String>, Error> {
        let (mut its, mut reason) = (0i64, 0 as c_int);
        // SAFETY: a live system; out-pointers to locals.
        check(
            unsafe { rp_system_solve(self.raw, rtol, len(max_iterations), &mut its, &mut reason) },
            "solving",
        )?;
        Ok(if reason > 0 {
            Ok(its as usize)
        } else {
            Err(format!(
                "PETSc's Krylov solver stopped without converging after {its} iterations ({})",
                reason_text(reason)
            ))
        })
    }

    /// The solution at the indices set by [`System::reads`].
    pub fn solution(&mut self, out: &mut [f64]) -> Result<(), Error> {
        // SAFETY: `out` has room for the read indices (checked by the caller's
        // use of the same list; the shim copies exactly that many).
        check(
            unsafe { rp_system_solution(self.raw, out.as_mut_ptr()) },
            "reading the solution",
        )
    }
}

impl Drop for System<'_> {
    fn drop(&mut self) {
        // SAFETY: created by rp_system_create (or null, which the shim ignores).
        unsafe { rp_system_destroy(self.raw) };
    }
}

/// PETSc's `KSPConvergedReason` values for divergence, in words.
fn reason_text(reason: c_int) -> &'static str {
    match reason {
        -3 => "the iteration limit was reached",
        -4 => "the residual grew without bound",
        -5 => "a breakdown in the method",
        -6 => "a breakdown in BiCG",
        -7 => "a non-symmetric matrix where a symmetric one was required",
        -8 => "an indefinite preconditioner",
        -9 => "a NaN or infinite value",
        -10 => "an indefinite matrix",
        -11 => "the preconditioner failed",
        _ => "see PETSc's KSPConvergedReason",
    }
}
