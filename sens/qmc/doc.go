// Package qmc generates quasi-random (low-discrepancy) points: the Sobol'
// sequence over the direction numbers of Joe and Kuo (2008), in up to
// MaxDim dimensions.
//
// The table of direction numbers is the published file new-joe-kuo-6.21201
// (in joekuo/, with its licence, which travels with every copy), packed by
// gen_directions.go into directions.bin and embedded in the package.
//
// The package imports the standard library only.
//
// References:
//   - I. M. Sobol', On the distribution of points in a cube and the
//     approximate evaluation of integrals, USSR Comput. Math. Math. Phys. 7
//     (1967) 86-112.
//   - S. Joe and F. Y. Kuo, Constructing Sobol sequences with better
//     two-dimensional projections, SIAM J. Sci. Comput. 30 (2008) 2635-2654.
//   - I. A. Antonov and V. M. Saleev, An economic method of computing
//     LP_tau-sequences, USSR Comput. Math. Math. Phys. 19 (1979) 252-256
//     (the Gray-code order).
package qmc

//go:generate go run gen_directions.go
