# critplex from Julia through ccall (plugins/julia). Set CRITPLEX_LIBRARY first.
include(joinpath(@__DIR__, "..", "..", "plugins", "julia", "src", "Critplex.jl"))
using .Critplex
x = randn(300, 20)        # replace with your time points x regions matrix
r = Critplex.connect(x)
curves_tsv, json = Critplex.sweep(r; options = "{\"max_density\": 0.4, \"grid\": 0.05}")
println(first(split(curves_tsv, "\n"), 4))
