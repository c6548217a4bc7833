/* ferrocirc — the assembled ODE system of a network (internal; used by sim.c and check).
 *
 * Unknowns. Every node is one of
 *   FIXED  pressure imposed: by a reservoir, or through an ideal pressure source (LINK) from
 *          another fixed node;
 *   STORE  has compliance: its stored volume V is an ODE state, dV/dt = sum of inflows, and its
 *          pressure solves V(p, t) = V (constant C: p = V/C; a driven membrane: V = C (p - p_back));
 *   ALG    neither: its pressure is algebraic, fixed by conservation sum q_in = 0.
 * The ODE state is x = [volumes of STORE nodes, own states of elements (inertance flows)]. With
 * volumes as states, conservation is a linear invariant that BDF keeps, for nonlinear (gas)
 * and time-driven stores too; pressures would keep it only for constant compliances.
 * ALG pressures z are eliminated exactly: every right-hand side solves G z = -F(z0) (Newton;
 * one step when every element is affine in pressure, as all built-in ones are within a mode)
 * with a KLU factorisation of G that is reused until a mode switch changes it. No parasitic
 * compliance is added anywhere.
 *
 * Newton matrix. CVODE needs solves with I - gamma J, J = df/dx including dz/dx. Forming J
 * would fill in (a tree's leaves all couple through its junctions), so instead the sparse
 * augmented system
 *     [ diag(C) - gamma dQ/dp   -gamma dQ/dz ] [dp]   [r]
 *     [ dF/dp                    dF/dz       ] [dz] = [0]
 * in pressure changes dp (dV = C dp; own-state rows are I - gamma J_own) is factored with KLU;
 * eliminating dz gives exactly (I - gamma J) dV = r. sim.c hands it to CVODE as a direct linear
 * solver; its cost is linear in network size. */
#ifndef FERROCIRC_SYS_H
#define FERROCIRC_SYS_H

#include <klu.h>

#include "net.h"
#include "sys_lu.h"

enum { FCI_NODE_ALG = 0, FCI_NODE_STORE, FCI_NODE_FIXED };

typedef struct fci_csc {
  int n, nnz;
  int *colptr, *rowind; /* CSC pattern, row indices sorted within each column */
  double *val;
} fci_csc;

typedef struct fci_klu {
  klu_symbolic *sym;
  klu_numeric *num;
  klu_common common;
} fci_klu;

/* Iterative Newton solves (src/sys_krylov.c): GMRES with ILU(0) on the augmented matrix. */
typedef struct fci_krylov {
  int n;                    /* nx + nz */
  int *rp, *ci, *map, *dg;  /* CSR pattern of A, CSR slot -> CSC slot, diagonal slot per row */
  double *a0, *a1;          /* A = a0 + gamma a1 (CSC order), from the last set-up */
  double *av;               /* A at gamma (CSC order) */
  double gamma;             /* gamma of av and of the ILU factors, 0 = none */
  double *lu;               /* ILU(0) factors, CSR order */
  int *iw;                  /* n, work */
  double *V, *H, *cs, *sn, *g, *y, *z, *u, *wt, *res; /* GMRES work */
  long iters, solves, psetups;
} fci_krylov;

typedef struct fci_sys {
  fc_net *net;              /* borrowed */
  int nN, nE;
  int *kind;                /* per node: FCI_NODE_* */
  int *idx;                 /* per node: index in x (STORE) or z (ALG), -1 for FIXED */
  int ns, no, nx, nz;       /* store nodes, own states, nx = ns + no, nz = alg nodes */
  int nroot;                /* event functions in all */
  int *fix_order;           /* FIX and LINK elements in evaluation order (nfix) */
  int *fix_node;            /* the node each of them fixes */
  int nfix;
  int nlink;                /* of them ideal pressure sources (LINK) */
  int *store_ptr, *store_el;/* per STORE node k: its store elements store_el[store_ptr[k]..] */
  int *xnode;               /* per store index k: node */
  int *znode;               /* per alg index i: node */
  /* work, all length nN or nE */
  double *p;                /* node pressures at the last evaluation */
  double *q;                /* element flows (FLOW and LINK), from -> to */
  double *dqa, *dqb;        /* dq/dp(from), dq/dp(to) */
  double *dqx;              /* dq/dx_own, FCI_MAX_OWN per element */
  double *qin;              /* net inflow per node */
  double *Csum, *dCsum;     /* per store index: total compliance and its p-derivative */
  double *zbuf;             /* nz: Newton update; zbuf[nz] = 0 stands for a node that is not ALG */
  /* algebraic solve */
  fci_csc G;                /* dF/dz */
  int *gslot;               /* per element 4 slots in G (from/from, from/to, to/from, to/to) */
  fci_klu gk;
  int glu_want;             /* 1: try the fixed-pivot LU on G first (sys_lu.h) */
  fci_lu *glu;              /* built at the first factorisation of G that wants it */
  int glu_on;               /* 1: G's last factorisation is glu's, 0: KLU's (gk) */
  int gdirty;               /* 1: G must be refactored before the next solve */
  int nonlinear;            /* 1 if some element is not affine in pressure */
  /* augmented Newton matrix */
  fci_csc A;
  int *aslot;               /* slot per stamped entry, consumed in stamp order */
  int naslot;
  fci_klu ak;
  int afactored;            /* 1: ak holds a factorisation KLU can refactor */
  int lu_want;              /* 1: every column's largest entry is its diagonal (sys_layout.c),
                             * so the Newton matrix is factored without pivoting (sys_lu.h) */
  fci_lu *lu;               /* built at the first set-up that wants it */
  int lu_on;                /* 1: the last factorisation is lu's, 0: KLU's (ak) */
  double *abuf;             /* nx + nz */
  double *Cpre;             /* per store index: compliance at the last Newton-matrix factorisation */
  long nGfact, nAfact;      /* factorisations done, for statistics */
  long nFixed;              /* of them, by the fixed-pivot LU (lu, glu) */
  double *xlast;            /* nx: state of the last evaluation, for the cache */
  double tlast;             /* its time */
  int cached;               /* 1 if p, q, qin hold the evaluation at (tlast, xlast) */
  long nEval, nEvalHit;     /* evaluations requested, and answered from the cache */
  /* A second set of the per-point buffers (fci_sys_swap): the interior points of a step are
   * evaluated into it, so the evaluation at the step end survives them in the cache. */
  double *p2, *q2, *qin2, *Csum2, *dCsum2, *xlast2, tlast2;
  int cached2;
  /* fast path (src/sys_linear.c) */
  int *ea, *eb;             /* per element: from and to node (eb = -1 if one-terminal) */
  int nlin, *lin_el, *lin_a, *lin_b; /* FLOW elements linear in their modes, their nodes */
  double *lin_k;            /* their coefficients, 3 each: q = k0 + k1 p(from) + k2 p(to) */
  double *lin_g;            /* their k1: a conductance (k0 = 0, k2 = -k1) needs nothing else,
                             * so evaluations stream 8 bytes of coefficients per element */
  int nlinx, *linx_j;       /* the linear elements that are not conductances (their lin_ index,
                             * ascending): flows() takes their k from lin_k */
  const unsigned char *qkeep; /* not NULL: a full evaluation stores the flow q[i] of a
                               * conductance only where qkeep[i] (the run's "tracked" lists;
                               * every other element's flow is never read, sim_run.c) */
  int ngen, *gen_el;        /* the other FLOW elements, evaluated through xFlow */
  int nupd, *upd_el, *upd_z; /* the FLOW elements (linear, then the others) at an ALG node, and
                              * the zbuf index of each terminal (nz if not ALG), 2 each: the
                              * only flows an algebraic update changes */
  int *lin_of;              /* per element: its index in the lin_ arrays, -1 if not linear */
  /* Index lists, so that the passes made at every evaluation visit only the elements they
   * concern instead of loading every element's struct (one cache line each, on a network
   * of 10^5 elements several MB per pass). Roles, states and roots never change. */
  int nflow, *flow_el;      /* FLOW elements, ascending (the stamping order of walk_aug) */
  int nstate_el, *state_el; /* elements with own states */
  int nroot_el, *root_el;   /* elements with root functions */
  double *Cconst;           /* per store index: its constant total compliance, 0 if not all
                               of its elements are constant */
  double *Cinv;             /* 1 / Cconst (0 where Cconst is): pressures are formed at every
                             * evaluation, and a division costs 8-10 times a multiplication's
                             * throughput (p = V / C to within an ulp either way) */
  int ldirty;               /* 1: re-read the coefficients (a mode switched) */
  /* Affine Newton matrix: where every FLOW element is linear in its mode, no element has own
   * states and every compliance is constant, A(gamma) = aa0 + gamma aa1 exactly until a mode
   * switches, so a set-up needs one pass over the nonzeros instead of stamping every element. */
  int aff_able;             /* the network qualifies, in its current modes */
  int all_const;            /* every store has a constant compliance (Csum, Csum2 = Cconst) */
  int aff_ok;               /* aa0 and aa1 hold the current modes' matrices */
  double *aa0, *aa1;        /* A.nnz each, allocated on first use */
  fci_krylov *kr;           /* iterative Newton solves; NULL: direct (KLU) */
} fci_sys;

/* Classify nodes, check topology, build patterns and symbolic factorisations. */
int fci_sys_build(fc_net *net, fci_sys **out, fc_error *err);
void fci_sys_free(fci_sys *s);
/* Forget the cached evaluation and refactor the conservation matrix next time (mode switch). */
void fci_sys_invalidate(fci_sys *s);

/* Evaluate every node pressure, element flow and node inflow at (t, x); x may be NULL when
 * nx == 0. Returns 0; 1 if the algebraic solve failed (singular); 2 if a store's volume has no
 * pressure (a gas bubble compressed beyond its range). The last evaluation is cached: CVODE asks for the same point from the right-hand
 * side, the quadratures and the step bookkeeping. Anything that changes a mode must call
 * fci_sys_invalidate. Returns 0, or >0 if the algebraic solve failed (singular: recoverable by a smaller
 * step only if caused by a transient state; the caller decides). */
int fci_sys_eval(fci_sys *s, double t, const double *x);
/* Exchange the evaluation buffers (p, q, qin, Csum, dCsum) and the cache with the second set;
 * call it again to return. Returns 0 and does nothing where an evaluation also writes the
 * shared partials dqa, dqb, dqx (elements evaluated through xFlow), 1 if it swapped. */
int fci_sys_swap(fci_sys *s);
/* A partial evaluation, for the interior points of a step when only some flows are reported:
 * every node pressure, the flows of the FLOW elements el[0..nel-1], and the inflows of the
 * nodes nd[0..nnd-1] (the caller lists every FLOW element at those nodes). Only where no node
 * is algebraic and no element is an ideal pressure source (their pressures and flows need the
 * whole balance); returns -1 without evaluating otherwise, 2 as fci_sys_eval. Leaves nothing
 * cached: the next fci_sys_eval evaluates afresh. */
int fci_sys_eval_some(fci_sys *s, double t, const double *x, const int *el, int nel,
                      const int *nd, int nnd);
/* After fci_sys_eval: f = dx/dt into xdot (length nx). */
int fci_sys_rhs_from_eval(fci_sys *s, double t, const double *x, double *xdot);
/* Newton matrix: assemble and factor at (t, x, gamma); solve in place on r (length nx). */
int fci_sys_psetup(fci_sys *s, double t, const double *x, double gamma);
int fci_sys_psolve(fci_sys *s, double *r);
/* The same with GMRES (sys->kr set): set-up stamps the Jacobian and factors ILU(0) at gamma;
 * fci_sys_kgamma refactors ILU(0) for a new gamma with the same Jacobian; the solve takes
 * CVODE's error weights w (length nx) and its tolerance on the weighted 2-norm of the
 * residual. Solve returns 0 converged, 1 residual reduced but not to tol, 2 failed; *iters
 * receives the Krylov iterations. */
int fci_sys_ksetup(fci_sys *s, double t, const double *x, double gamma);
/* Choose the Newton solver (FCI_LS_*; AUTO decides from KLU's fill estimate) and build the
 * iterative one if chosen; returns FCI_LS_DIRECT or FCI_LS_ITERATIVE. */
int fci_sys_linear_choice(fci_sys *s, int choice);
int fci_krylov_build(fci_sys *s);
void fci_krylov_free(fci_krylov *K);
int fci_krylov_setup(fci_sys *s, double gamma); /* a0, a1 hold A(0), A(1) - A(0) */
int fci_krylov_gamma(fci_sys *s, double gamma);
int fci_krylov_solve(fci_sys *s, double *r, const double *w, double tol, int *iters);
/* Event functions (length nroot) after fci_sys_eval. */
void fci_sys_roots(fci_sys *s, double t, const double *x, double *g);
/* Steady state at time t with every source at its t value: solves sum q = 0 at every STORE and
 * ALG node and xdot_own = 0; x in/out. FC_ETOPO if the steady state is undetermined. */
int fci_sys_steady(fci_sys *s, double t, double *x, fc_error *err);
/* Initial state "rest": store pressures 0 gauge, own states 0. */
void fci_sys_rest(const fci_sys *s, double *x);
/* Stored volume relative to 0 gauge at the given store index (sum over its elements). */
double fci_sys_store_volume(const fci_sys *s, double t, int k, double p);

/* Fast path (src/sys_linear.c): allocate at build; re-read the linear coefficients. */
int fci_sys_linear_build(fci_sys *s);
void fci_sys_linear_free(fci_sys *s);
void fci_sys_linear_refresh(fci_sys *s);

/* Sparse helpers (src/sys_sparse.c). Build the CSC pattern of n x n entries (rows[k], cols[k])
 * for k < m; slot[k] receives the value index of entry k (duplicates share one). */
int fci_csc_build(fci_csc *c, int n, int m, const int *rows, const int *cols, int *slot);
void fci_csc_free(fci_csc *c);
/* Symbolic analysis (once; also done by the first factorisation). */
int fci_klu_analyze(fci_klu *k, const fci_csc *c);
/* Factor (full) or refactor (same pivots; falls back to full when ill-conditioned). */
int fci_klu_factor(fci_klu *k, const fci_csc *c, int refactor);
int fci_klu_solve(fci_klu *k, const fci_csc *c, double *b);
void fci_klu_free(fci_klu *k);

#endif
