library(testthat)
library(critplex)

test_check("critplex")
