# critplex from Julia (plugins/julia). Once: using Pkg; Pkg.develop(path = "PREFIX/share/critplex/julia")
using Critplex
dir = mktempdir()   # an invented study (README: the demo study)
study = simulate_study(dir; options = Dict("regions" => 20, "frames" => 200, "groups" =>
    [Dict("name" => "rested", "subjects" => 4), Dict("name" => "deprived", "subjects" => 4)]))
x = randn(300, 20)        # replace with your time points x regions matrix
r = connect(x; options = (method = "ledoit_wolf",))
s = sweep(r.values; options = (max_density = 0.4, grid = 0.05))
println(s.curves["chi"])
run_cohort(study["manifest"], read(study["config"], String), joinpath(dir, "results"))
cmp = compare(joinpath(dir, "results"))
println(cmp.tests["summary"], cmp.tests["p_value"])
println(report(joinpath(dir, "results")))
