/* The C side of rill-petsc: every call into PETSc and MPI goes through
 * here, with fixed-width types (int64_t indices, double values, int error
 * codes), so that the Rust side never depends on the widths of PetscInt or
 * MPI_Comm or on how an MPI library spells its handles. Each function
 * returns 0 or a PETSc / MPI error code; rp_error_text gives its text. */
#include <petscksp.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <sys/resource.h>

_Static_assert(sizeof(PetscScalar) == sizeof(double),
               "rill needs a real, double-precision PETSc (Debian: libpetsc-real-dev)");

typedef struct rp_system {
  Mat a;
  Vec b, x, local;
  KSP ksp;
  VecScatter scatter;
  PetscInt start, end;
  PetscInt *cols; /* scratch for one row's columns */
  PetscInt cols_cap;
} rp_system;

/* Options the engine uses unless the user gave them: GMRES with right
 * preconditioning, so the stopping test is on the true residual as in the
 * embedded engine; hypre's BoomerAMG with the options measured best on the
 * 1.12-million-cell case. */
static const char *defaults[][2] = {
    {"-ksp_type", "gmres"},
    {"-ksp_gmres_restart", "60"},
    {"-ksp_pc_side", "right"},
    {"-ksp_norm_type", "unpreconditioned"},
    {"-pc_type", "hypre"},
    {"-pc_hypre_type", "boomeramg"},
    {"-pc_hypre_boomeramg_coarsen_type", "HMIS"},
    {"-pc_hypre_boomeramg_interp_type", "ext+i"},
    {"-pc_hypre_boomeramg_strong_threshold", "0.5"},
    {"-pc_hypre_boomeramg_P_max", "4"},
    {"-pc_hypre_boomeramg_agg_nl", "1"},
};

int rp_init(const char *user_options) {
  PetscErrorCode ierr = PetscInitializeNoArguments();
  if (ierr) return (int)ierr;
  if (user_options && *user_options) {
    ierr = PetscOptionsInsertString(NULL, user_options);
    if (ierr) return (int)ierr;
  }
  for (size_t i = 0; i < sizeof defaults / sizeof defaults[0]; i++) {
    PetscBool has = PETSC_FALSE;
    ierr = PetscOptionsHasName(NULL, NULL, defaults[i][0], &has);
    if (ierr) return (int)ierr;
    if (!has) {
      ierr = PetscOptionsSetValue(NULL, defaults[i][0], defaults[i][1]);
      if (ierr) return (int)ierr;
    }
  }
  return 0;
}

int rp_finalize(void) { return (int)PetscFinalize(); }

int rp_rank(void) {
  PetscMPIInt r = 0;
  MPI_Comm_rank(PETSC_COMM_WORLD, &r);
  return (int)r;
}

int rp_size(void) {
  PetscMPIInt s = 1;
  MPI_Comm_size(PETSC_COMM_WORLD, &s);
  return (int)s;
}

void rp_abort(int code) { MPI_Abort(PETSC_COMM_WORLD, code); }

const char *rp_error_text(int code) {
  const char *text = NULL;
  PetscErrorMessage((PetscErrorCode)code, &text, NULL);
  return text ? text : "unknown PETSc error";
}

static int count(int64_t n, int *out) {
  if (n < 0 || n > INT32_MAX) return PETSC_ERR_ARG_OUTOFRANGE;
  *out = (int)n;
  return 0;
}

int rp_sum(double *buf, int64_t n) {
  int m;
  if (count(n, &m)) return PETSC_ERR_ARG_OUTOFRANGE;
  return MPI_Allreduce(MPI_IN_PLACE, buf, m, MPI_DOUBLE, MPI_SUM, PETSC_COMM_WORLD);
}

int rp_max(double *buf, int64_t n) {
  int m;
  if (count(n, &m)) return PETSC_ERR_ARG_OUTOFRANGE;
  return MPI_Allreduce(MPI_IN_PLACE, buf, m, MPI_DOUBLE, MPI_MAX, PETSC_COMM_WORLD);
}

int rp_bcast(double *buf, int64_t n) {
  int m;
  if (count(n, &m)) return PETSC_ERR_ARG_OUTOFRANGE;
  return MPI_Bcast(buf, m, MPI_DOUBLE, 0, PETSC_COMM_WORLD);
}

/* Gathers `n` values of every rank, in rank order, into `recv` on rank 0
 * (ignored elsewhere). */
int rp_gather(const double *send, int64_t n, double *recv) {
  int size = rp_size(), rank = rp_rank(), m, err;
  if (count(n, &m)) return PETSC_ERR_ARG_OUTOFRANGE;
  int *counts = calloc((size_t)size, sizeof(int));
  int *displs = calloc((size_t)size, sizeof(int));
  if (!counts || !displs) {
    free(counts);
    free(displs);
    return PETSC_ERR_MEM;
  }
  err = MPI_Gather(&m, 1, MPI_INT, counts, 1, MPI_INT, 0, PETSC_COMM_WORLD);
  if (!err && rank == 0) {
    int64_t total = 0;
    for (int r = 0; r < size; r++) {
      if (total > INT32_MAX) { err = PETSC_ERR_ARG_OUTOFRANGE; break; }
      displs[r] = (int)total;
      total += counts[r];
    }
  }
  if (!err)
    err = MPI_Gatherv(send, m, MPI_DOUBLE, recv, counts, displs, MPI_DOUBLE, 0, PETSC_COMM_WORLD);
  free(counts);
  free(displs);
  return err;
}

/* Peak resident memory of this process, KiB (Linux reports ru_maxrss in KiB). */
int64_t rp_peak_rss_kib(void) {
  struct rusage u;
  if (getrusage(RUSAGE_SELF, &u)) return -1;
  return (int64_t)u.ru_maxrss;
}

static int to_petsc(int64_t v, PetscInt *out) {
  if (v < 0 || (sizeof(PetscInt) < 8 && v > (int64_t)PETSC_MAX_INT)) return PETSC_ERR_ARG_OUTOFRANGE;
  *out = (PetscInt)v;
  return 0;
}

int rp_index_bytes(void) { return (int)sizeof(PetscInt); }

int rp_system_create(int64_t n_local, int64_t n_global, const int64_t *d_nnz,
                     const int64_t *o_nnz, rp_system **out) {
  PetscErrorCode ierr;
  PetscInt m, big, *d = NULL, *o = NULL;
  if (to_petsc(n_local, &m) || to_petsc(n_global, &big)) return PETSC_ERR_ARG_OUTOFRANGE;
  rp_system *s = calloc(1, sizeof *s);
  if (!s) return PETSC_ERR_MEM;
  d = malloc(sizeof(PetscInt) * (size_t)(m ? m : 1));
  o = malloc(sizeof(PetscInt) * (size_t)(m ? m : 1));
  if (!d || !o) { free(d); free(o); free(s); return PETSC_ERR_MEM; }
  for (PetscInt i = 0; i < m; i++) {
    if (to_petsc(d_nnz[i], &d[i]) || to_petsc(o_nnz[i], &o[i])) {
      free(d); free(o); free(s);
      return PETSC_ERR_ARG_OUTOFRANGE;
    }
  }
  ierr = MatCreateAIJ(PETSC_COMM_WORLD, m, m, big, big, 0, d, 0, o, &s->a);
  free(d);
  free(o);
  if (ierr) { free(s); return (int)ierr; }
  /* The counts are exact for cell rows and an upper bound for the rows of
   * wells and aquifers; a wrong count must cost time, never the run. */
  ierr = MatSetOption(s->a, MAT_NEW_NONZERO_ALLOCATION_ERR, PETSC_FALSE);
  if (!ierr) ierr = MatGetOwnershipRange(s->a, &s->start, &s->end);
  if (!ierr) ierr = MatCreateVecs(s->a, &s->x, &s->b);
  if (!ierr) ierr = KSPCreate(PETSC_COMM_WORLD, &s->ksp);
  if (!ierr) ierr = KSPSetOperators(s->ksp, s->a, s->a);
  if (!ierr) ierr = KSPSetFromOptions(s->ksp);
  *out = s;
  return (int)ierr;
}

int rp_system_range(const rp_system *s, int64_t *start, int64_t *end) {
  *start = (int64_t)s->start;
  *end = (int64_t)s->end;
  return 0;
}

/* The global indices this rank reads back after a solve, in its own order. */
int rp_system_reads(rp_system *s, int64_t n, const int64_t *global) {
  PetscErrorCode ierr;
  PetscInt m, *idx;
  IS is;
  if (to_petsc(n, &m)) return PETSC_ERR_ARG_OUTOFRANGE;
  idx = malloc(sizeof(PetscInt) * (size_t)(m ? m : 1));
  if (!idx) return PETSC_ERR_MEM;
  for (PetscInt i = 0; i < m; i++)
    if (to_petsc(global[i], &idx[i])) { free(idx); return PETSC_ERR_ARG_OUTOFRANGE; }
  ierr = ISCreateGeneral(PETSC_COMM_SELF, m, idx, PETSC_OWN_POINTER, &is);
  if (ierr) { free(idx); return (int)ierr; }
  if (s->local) VecDestroy(&s->local);
  if (s->scatter) VecScatterDestroy(&s->scatter);
  ierr = VecCreateSeq(PETSC_COMM_SELF, m, &s->local);
  if (!ierr) ierr = VecScatterCreate(s->x, is, s->local, NULL, &s->scatter);
  ISDestroy(&is);
  return (int)ierr;
}

int rp_system_zero(rp_system *s) {
  PetscErrorCode ierr = MatZeroEntries(s->a);
  if (!ierr) ierr = VecZeroEntries(s->b);
  return (int)ierr;
}

int rp_system_add_row(rp_system *s, int64_t row, int64_t ncols, const int64_t *cols,
                      const double *vals) {
  PetscInt r, n;
  if (to_petsc(row, &r) || to_petsc(ncols, &n)) return PETSC_ERR_ARG_OUTOFRANGE;
  if (n > s->cols_cap) {
    PetscInt *c = realloc(s->cols, sizeof(PetscInt) * (size_t)n);
    if (!c) return PETSC_ERR_MEM;
    s->cols = c;
    s->cols_cap = n;
  }
  for (PetscInt k = 0; k < n; k++)
    if (to_petsc(cols[k], &s->cols[k])) return PETSC_ERR_ARG_OUTOFRANGE;
  return (int)MatSetValues(s->a, 1, &r, n, s->cols, (const PetscScalar *)vals, ADD_VALUES);
}

int rp_system_add_rhs(rp_system *s, int64_t row, double value) {
  PetscInt r;
  if (to_petsc(row, &r)) return PETSC_ERR_ARG_OUTOFRANGE;
  return (int)VecSetValues(s->b, 1, &r, (const PetscScalar *)&value, ADD_VALUES);
}

/* Assembles what every rank added, then solves from x = 0 to the relative
 * residual `rtol`. `reason` is PETSc's KSPConvergedReason (> 0: converged). */
int rp_system_solve(rp_system *s, double rtol, int64_t max_it, int64_t *its, int *reason) {
  PetscErrorCode ierr;
  PetscInt n = 0, mi;
  KSPConvergedReason why = KSP_CONVERGED_ITERATING;
  if (to_petsc(max_it, &mi)) return PETSC_ERR_ARG_OUTOFRANGE;
  ierr = MatAssemblyBegin(s->a, MAT_FINAL_ASSEMBLY);
  if (!ierr) ierr = MatAssemblyEnd(s->a, MAT_FINAL_ASSEMBLY);
  if (!ierr) ierr = VecAssemblyBegin(s->b);
  if (!ierr) ierr = VecAssemblyEnd(s->b);
  if (!ierr) ierr = VecZeroEntries(s->x);
  if (!ierr) ierr = KSPSetOperators(s->ksp, s->a, s->a);
  if (!ierr) ierr = KSPSetTolerances(s->ksp, rtol, 1e-300, PETSC_DEFAULT, mi);
  if (!ierr) ierr = KSPSolve(s->ksp, s->b, s->x);
  if (!ierr) ierr = KSPGetIterationNumber(s->ksp, &n);
  if (!ierr) ierr = KSPGetConvergedReason(s->ksp, &why);
  *its = (int64_t)n;
  *reason = (int)why;
  return (int)ierr;
}

/* The solution at the indices given to rp_system_reads, into `out`. */
int rp_system_solution(rp_system *s, double *out) {
  PetscErrorCode ierr;
  const PetscScalar *v;
  PetscInt m;
  if (!s->scatter) return PETSC_ERR_ORDER;
  ierr = VecScatterBegin(s->scatter, s->x, s->local, INSERT_VALUES, SCATTER_FORWARD);
  if (!ierr) ierr = VecScatterEnd(s->scatter, s->x, s->local, INSERT_VALUES, SCATTER_FORWARD);
  if (!ierr) ierr = VecGetLocalSize(s->local, &m);
  if (!ierr) ierr = VecGetArrayRead(s->local, &v);
  if (ierr) return (int)ierr;
  memcpy(out, v, sizeof(double) * (size_t)m);
  return (int)VecRestoreArrayRead(s->local, &v);
}

void rp_system_destroy(rp_system *s) {
  if (!s) return;
  KSPDestroy(&s->ksp);
  MatDestroy(&s->a);
  VecDestroy(&s->b);
  VecDestroy(&s->x);
  if (s->local) VecDestroy(&s->local);
  if (s->scatter) VecScatterDestroy(&s->scatter);
  free(s->cols);
  free(s);
}
