-- test_rank_advice.lua - pf.rank_advice: the fewest MPI ranks for a
-- distributed grid (docs/distributed.md).  Reference: FFTW's MPI slab
-- distribution, which gives each rank ceil(n0 / P) planes of the first axis
-- by default (FFTW 3.3 manual, "MPI Data Distribution"; the rule from
-- memory, checked against fftw_mpi_local_size_transposed in
-- tests/runner/test_distributed.sh's non-dividing runs), and 16 bytes per
-- complex double sample (C99 double complex).  The expected counts below are
-- worked out by hand from that rule.
local pf = require "psiflight"
local check = require "check"

-- 1024^3, two wave functions and one planning scratch (3 fields of 16 GiB
-- in all), 8 GiB per rank: 6 ranks would hold ceil(1024/6) = 171 planes =
-- 171 * 1024^2 * 16 B * 3 = 8.02 GiB > 8 GiB; 7 ranks hold 147 planes.
local a = pf.rank_advice{points = {1024, 1024, 1024}, memory_per_rank = 8 * 2 ^ 30}
check.equal(a.ranks, 7, "1024^3 at 8 GiB a rank: 7 ranks [FFTW slab rule, by hand]")
check.equal(a.planes_per_rank, 147, "1024^3 on 7 ranks: ceil(1024 / 7) = 147 planes")
check.equal(a.bytes_per_rank, 147 * 1024 * 1024 * 16 * 3, "bytes per rank: 147 planes x 1024^2 x 16 B x 3 fields")

-- 2048^3 with three wave functions (four fields of 128 GiB) at 64 GiB a
-- rank: 512 GiB / 64 GiB = 8 ranks exactly (2048 / 8 = 256 planes).
a = pf.rank_advice{points = {2048, 2048, 2048}, memory_per_rank = 64 * 2 ^ 30, waves = 3}
check.equal(a.ranks, 8, "2048^3, 3 waves, 64 GiB a rank: 8 ranks [by hand]")
check.equal(a.planes_per_rank, 256, "2048^3 on 8 ranks: 256 planes each")

-- A 2D grid whose second axis is shorter: the transposed slab of FFTW's
-- output (ceil(n1 / P) planes of n0 points) can be the larger one.  64 x 8
-- at 3072 B a rank: 8 ranks (8 planes x 8 = 64 samples, transposed 1 plane
-- x 64; 3 x 64 x 16 B = 3072 B).  At 2304 B the position slabs alone would
-- fit 11 ranks (ceil(64/11) = 6 planes x 8 = 48 samples), but a transposed
-- plane always holds 64 samples: no rank count fits.
a = pf.rank_advice{points = {64, 8}, memory_per_rank = 3072}
check.equal(a.ranks, 8, "64 x 8 in 3072 B a rank: 8 ranks [by hand]")
a = pf.rank_advice{points = {64, 8}, memory_per_rank = 2304}
check.equal(a.ranks, false, "64 x 8 in 2304 B a rank: none, the transposed slab decides [by hand]")

-- Nothing fits: even one plane per rank is too much.
a = pf.rank_advice{points = {16, 1024, 1024}, memory_per_rank = 1e6}
check.equal(a.ranks, false, "one plane of 1024^2 samples does not fit 1 MB: ranks = false")

check.fails(function() pf.rank_advice{points = {16}, memory_per_rank = 1e9} end, "1D refused", "2 or 3 counts")
check.fails(function() pf.rank_advice{points = {16, 16}} end, "memory_per_rank required", "memory_per_rank")
check.fails(function() pf.rank_advice{points = {16, 16}, memory_per_rank = 1e9, wave = 2} end, "misspelt key",
  "did you mean 'waves'?")
check.done()
