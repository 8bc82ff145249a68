// Unit tests of the filtration stage: order, ties, density grid.
#include <catch2/catch.hpp>

#include "base/error.hpp"
#include "filtration/filtration.hpp"
#include "check_error.hpp"

using namespace critplex;
using namespace critplex::filtration;

static Eigen::MatrixXd four_nodes() {
  Eigen::MatrixXd m(4, 4);
  m << 1.0, 0.9, 0.5, -0.2,
       0.9, 1.0, 0.5, 0.1,
       0.5, 0.5, 1.0, 0.7,
      -0.2, 0.1, 0.7, 1.0;
  return m;
}

TEST_CASE("edges enter by decreasing weight, ties by (i, j)", "[filtration]") {
  Filtration f = build(four_nodes(), WeightMode::positive);
  REQUIRE(f.pairs() == 6);
  REQUIRE(f.edges.size() == 5);  // the negative entry never enters in positive mode
  CHECK(f.edges[0].u == 0); CHECK(f.edges[0].v == 1);
  CHECK(f.edges[1].u == 2); CHECK(f.edges[1].v == 3);
  CHECK(f.edges[2].u == 0); CHECK(f.edges[2].v == 2);  // tie 0.5: (0,2) before (1,2)
  CHECK(f.edges[3].u == 1); CHECK(f.edges[3].v == 2);
  CHECK(f.tie_group_end(3) == 4);
  CHECK(f.tie_group_end(4) == 4);
}

TEST_CASE("weight modes", "[filtration]") {
  CHECK(build(four_nodes(), WeightMode::absolute).edges.size() == 6);
  Filtration neg = build(four_nodes(), WeightMode::negative);
  REQUIRE(neg.edges.size() == 1);
  CHECK(neg.edges[0].value == -0.2);
}

TEST_CASE("maximum density keeps whole tie groups", "[filtration]") {
  // 3 of 6 pairs requested; edge 3 ties with edge 2, so 4 enter.
  Filtration f = build(four_nodes(), WeightMode::positive, 0.5);
  CHECK(f.edges.size() == 4);
}

TEST_CASE("grid points are reported after tied edges", "[filtration]") {
  Filtration f = build(four_nodes(), WeightMode::positive);
  GridSpec spec;
  spec.kind = "list";
  spec.values = {0.0, 1.0 / 6.0, 0.5};
  auto grid = make_grid(f, spec);
  REQUIRE(grid.size() == 3);
  CHECK(grid[0].edges == 0);
  CHECK(grid[1].edges == 1);
  CHECK(grid[2].edges == 4);  // 3 edges requested, the tie at 0.5 brings a fourth
  CHECK(grid[2].threshold == 0.5);
  spec.kind = "every";
  auto every = make_grid(f, spec);
  CHECK(every.size() == 5);  // 0, 1, 2, 4, 5 edges
}

TEST_CASE("bad matrices are refused with row and column", "[filtration]") {
  Eigen::MatrixXd m = four_nodes();
  m(0, 3) = 0.3;
  CHECK_ERROR_KIND_WITH(build(m, WeightMode::positive), ErrorKind::data, Catch::Contains("not symmetric") && Catch::Contains("row 1, column 4"));
  m = four_nodes();
  m(2, 1) = m(1, 2) = std::numeric_limits<double>::quiet_NaN();
  CHECK_ERROR_KIND_WITH(build(m, WeightMode::positive), ErrorKind::data, Catch::Contains("not finite"));
  CHECK_ERROR_KIND(build(Eigen::MatrixXd::Zero(3, 4), WeightMode::positive), ErrorKind::data);
}
