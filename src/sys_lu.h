/* ferrocirc — sparse LU without pivoting, in a fixed fill-reducing order (internal).
 *
 * For Newton matrices whose every column has its largest entry on the diagonal (sys.h: every
 * row a compliant node's volume balance in pressure changes, A = diag(C) - gamma dQ/dp with
 * passive elements, dq/dp(upstream) >= 0): Gaussian elimination on such a matrix makes no row
 * interchange, whatever the symmetric order (column diagonal dominance is kept by every
 * elimination step; Golub & Van Loan, Matrix Computations, 4th ed., Thm 3.4.3), so the pivots
 * can be fixed once and the factorisation reduced to a list of operations on a fixed pattern.
 * KLU does the same work through its general machinery (block triangular form, per-column
 * depth-first searches, pivot tolerance tests), which on a tree of a few hundred nodes costs
 * several times the arithmetic (docs/performance.md, eighth round).
 *
 * Order: AMD on A + A^T (Amestoy, Davis & Duff 1996, SIAM J. Matrix Anal. Appl. 17:886; the
 * library KLU itself uses). Pattern: the elimination tree and row subtrees of the symmetric
 * pattern (Davis, Direct Methods for Sparse Linear Systems, SIAM 2006, sections 4.1-4.2);
 * L (unit lower) and U (upper) share it transposed. Numeric: left-looking, column by column,
 * the columns of L applied in ascending order (a topological order of the updates). */
#ifndef FERROCIRC_SYS_LU_H
#define FERROCIRC_SYS_LU_H

typedef struct fci_lu fci_lu;

/* Order and pattern for the n x n compressed-column pattern (colptr, rowind; rows sorted, no
 * duplicates). NULL when out of memory, when AMD fails, or when the factorisation would take
 * more than cap updates per entry of A and of the factors (fill-in: the update list, 12 bytes
 * an update, would outweigh the factors; KLU's general code then). */
fci_lu *fci_lu_new(int n, const int *colptr, const int *rowind, double cap);

/* Factor the values val + gamma val1 (one per pattern entry; val1 NULL: val alone), formed as
 * they are loaded (an affine Newton matrix, sys.h aff_able, needs no pass of its own). FC_OK,
 * or FC_ESOLVE when a pivot is zero or not finite or the pivots span more than 1e13 (the caller
 * then factors with pivoting). */
int fci_lu_factor(fci_lu *f, const double *val, const double *val1, double gamma);

/* Solve A x = b in place with the last successful factorisation. */
void fci_lu_solve(const fci_lu *f, double *b);

/* Nonzeros of L and U, without the diagonal (for tests and statistics). */
long fci_lu_nnz(const fci_lu *f);

void fci_lu_free(fci_lu *f);

#endif
