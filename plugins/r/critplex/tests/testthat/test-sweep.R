# Sweeps against clique counts made in R, independently of the library.

# Every clique of the graph (a list of node sets), by growing cliques one node at a time.
all_cliques <- function(adj) {
  n <- nrow(adj)
  out <- list()
  grow <- function(clique, candidates) {
    for (v in candidates) {
      c2 <- c(clique, v)
      out[[length(out) + 1L]] <<- c2
      grow(c2, candidates[candidates > v & adj[v, candidates]])
    }
  }
  grow(integer(0), seq_len(n))
  out
}

# chi = sum over cliques of (-1)^(size - 1) (the flag complex's Euler characteristic).
euler_by_counting <- function(adj) {
  sizes <- vapply(all_cliques(adj), length, integer(1))
  sum((-1)^(sizes - 1L))
}

test_that("chi at every edge equals an independent clique count", {
  # reference: brute-force clique enumeration written here in R; chi = sum_k (-1)^k Cl_k
  # (the Euler characteristic of the flag complex, common practice). Invented weights.
  set.seed(11)
  n <- 8
  a <- matrix(stats::runif(n * n), n)
  w <- (a + t(a)) / 2
  diag(w) <- 1
  s <- critplex_sweep(w, list(grid = "every"))
  upper <- which(upper.tri(w), arr.ind = TRUE)
  order_in <- order(-w[upper])
  expect_equal(nrow(s$curves), nrow(upper) + 1L)
  for (k in seq_len(nrow(upper))) {
    adj <- matrix(FALSE, n, n)
    e <- upper[order_in[seq_len(k)], , drop = FALSE]
    adj[e] <- TRUE
    adj[e[, 2:1]] <- TRUE
    expect_equal(s$curves$edges[k + 1L], k)
    expect_equal(s$curves$chi[k + 1L], euler_by_counting(adj))
    sizes <- vapply(all_cliques(adj), length, integer(1))
    expect_equal(s$curves$cliques_2[k + 1L], sum(sizes == 3L))
  }
})

test_that("the octahedron has chi = 2 and node curvature 1/3", {
  # reference: the octahedron's clique complex is a 2-sphere, chi = 2, and each of its
  # 6 nodes has Gauss-Bonnet curvature 1/3 (closed forms, docs/methods.md)
  oct <- matrix(1, 6, 6) - diag(6)
  oct[cbind(1:6, c(2, 1, 4, 3, 6, 5))] <- 0
  s <- critplex_sweep(oct, list(grid = "every", curvature = list()))
  expect_equal(tail(s$curves$chi, 1), 2)
  expect_equal(as.numeric(s$node_curvature[nrow(s$node_curvature), ]), rep(1 / 3, 6), tolerance = 1e-12)
})

test_that("infinities arrive as R's Inf and -Inf", {
  # A 4-cycle entered first has chi = 0, so log|chi| is -Inf there; the essential bar of
  # dimension 0 never dies (death density Inf).
  w <- matrix(0, 4, 4)
  w[cbind(c(1, 2, 3, 4, 1, 2), c(2, 3, 4, 1, 3, 4))] <- c(0.9, 0.8, 0.7, 0.6, 0.2, 0.1)
  w <- w + t(w)
  diag(w) <- 1
  s <- critplex_sweep(w, list(grid = "every", curvature = list(), homology = list(max_dimension = 1)))
  chi <- s$curves$chi
  expect_equal(chi, c(4, 3, 2, 1, 0, 1, 1))
  expect_identical(s$curves$log_abs_chi[chi == 0], -Inf)
  expect_equal(s$curves$log_abs_chi[chi != 0], log(abs(chi[chi != 0])))
  expect_true(is.nan(s$curves$threshold[1]) || is.na(s$curves$threshold[1]))
  expect_true(any(s$bars$dimension == 0L & s$bars$death_density == Inf))
  expect_s3_class(s$bars, "data.frame")
})
