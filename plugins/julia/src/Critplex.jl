"""
Julia binding of critplex: `ccall` on the C interface of libcritplex.

The library is found when the module is loaded (in `__init__`, so never frozen into a
precompiled image), in this order: `Critplex.load_library(path)` or
`ENV["CRITPLEX_LIBRARY"]`, the prefix this module is installed in
(`PREFIX/share/critplex/julia`), `pkg-config critplex`, the system loader. Its ABI is
checked against the one this module is written for. Julia arrays are column-major and
cross as `CPX_COL_MAJOR`; options are `Dict`s or `NamedTuple`s (sent as JSON).

Research software, not a medical device: not for clinical decisions.
"""
module Critplex

using Libdl
import JSON

export critplex_version, abi_version, library_path, load_library, CritplexError,
       connect, connect_bands, sweep, run_subject, run_cohort, compare, report, simulate_study

# The C interface's ABI this module is written for (CPX_ABI_VERSION, the SONAME's number).
const ABI_VERSION = 1
const SONAME = "libcritplex.so.$(ABI_VERSION)"
const CPX_COL_MAJOR = Cint(1)
const BAR_COLUMNS = ["dimension", "birth_rank", "death_rank", "birth_density", "death_density",
                     "birth_threshold", "death_threshold"]

const HANDLE = Ref{Ptr{Cvoid}}(C_NULL)
const PATH = Ref{String}("")
const SYMBOLS = Dict{Symbol,Ptr{Cvoid}}()

"""
    CritplexError(status, message)

A failed call: `status` is the status name (`"CPX_ERR_IO"`, ...), `message` the library's
explanation naming the argument, file, line or value at fault.
"""
struct CritplexError <: Exception
    status::String
    message::String
end
Base.showerror(io::IO, e::CritplexError) = print(io, "critplex: ", e.message, " (", e.status, ")")

function _pkg_config_libdir()
    try
        dir = strip(read(`pkg-config --variable=libdir critplex`, String))
        return isempty(dir) ? nothing : joinpath(dir, SONAME)
    catch
        return nothing
    end
end

function _beside_module()
    prefix = normpath(joinpath(@__DIR__, "..", "..", "..", ".."))  # PREFIX/share/critplex/julia/src
    for dir in ("lib", "lib64", joinpath("lib", "x86_64-linux-gnu"), joinpath("lib", "aarch64-linux-gnu"))
        path = joinpath(prefix, dir, SONAME)
        isfile(path) && return path
    end
    return joinpath(prefix, "lib", SONAME)
end

"""
    load_library(path=nothing) -> String

Load libcritplex and check its ABI; returns the path loaded. Without `path`:
`ENV["CRITPLEX_LIBRARY"]`, then the install prefix of this module, then `pkg-config
critplex`, then the system loader. A failure lists every place tried and how to fix it.
"""
function load_library(path::Union{Nothing,AbstractString} = nothing)
    explicit = path !== nothing ? String(path) : get(ENV, "CRITPLEX_LIBRARY", "")
    places = isempty(explicit) ?
        [("the install prefix of this module", _beside_module()),
         ("pkg-config critplex", _pkg_config_libdir()),
         ("the system loader", SONAME)] :
        [(path !== nothing ? "load_library(path)" : "CRITPLEX_LIBRARY", explicit)]
    tried = String[]
    for (place, candidate) in places
        if candidate === nothing
            push!(tried, "  - $place: no critplex.pc on PKG_CONFIG_PATH")
            continue
        end
        handle = Libdl.dlopen_e(candidate)
        if handle == C_NULL
            push!(tried, "  - $place: cannot load $candidate")
            continue
        end
        empty!(SYMBOLS)
        HANDLE[] = handle
        PATH[] = candidate
        _check_abi()
        return candidate
    end
    throw(CritplexError("not_found",
        "libcritplex ($SONAME) was not found. Places tried, in order:\n" * join(tried, "\n") *
        "\nTo fix: set ENV[\"CRITPLEX_LIBRARY\"] to the library's path (or call " *
        "Critplex.load_library(path)), set PKG_CONFIG_PATH to PREFIX/lib/pkgconfig of your " *
        "critplex install, or install critplex into a system prefix."))
end

function _check_abi()
    found = ccall(fn(:cpx_abi_version), Cint, ())
    if found != ABI_VERSION
        version = unsafe_string(ccall(fn(:cpx_version), Cstring, ()))
        HANDLE[] = C_NULL
        empty!(SYMBOLS)
        throw(CritplexError("abi_mismatch",
            "the Critplex module is written for ABI $ABI_VERSION of libcritplex, but $(PATH[]) " *
            "reports ABI $found (library version $version): use the module installed with that " *
            "library (PREFIX/share/critplex/julia) or point CRITPLEX_LIBRARY at a $SONAME"))
    end
    return nothing
end

# Loads at run time; a missing library is reported on first use, so load_library(path)
# can still be called.
function __init__()
    try
        load_library()
    catch e
        e isa CritplexError && e.status == "abi_mismatch" && rethrow()
    end
    return nothing
end

# The address of one C function of the loaded library.
function fn(name::Symbol)
    HANDLE[] == C_NULL && load_library()
    return get!(() -> Libdl.dlsym(HANDLE[], name), SYMBOLS, name)
end

function check(status::Cint)
    status == 0 && return nothing
    name = unsafe_string(ccall(fn(:cpx_status_name), Cstring, (Cint,), status))
    message = unsafe_string(ccall(fn(:cpx_last_error), Cstring, ()))
    throw(CritplexError(name, message))
end

# Copies a string the library allocated, then releases it.
function take_string(p::Ptr{Cchar})
    try
        return unsafe_string(p)
    finally
        ccall(fn(:cpx_string_free), Cvoid, (Ptr{Cchar},), p)
    end
end

# Options as JSON text: NamedTuples and Dicts (nested too) become objects with string keys.
jsonable(x) = x
jsonable(x::NamedTuple) = Dict{String,Any}(string(k) => jsonable(v) for (k, v) in pairs(x))
jsonable(x::AbstractDict) = Dict{String,Any}(string(k) => jsonable(v) for (k, v) in x)
jsonable(x::Union{AbstractVector,Tuple}) = Any[jsonable(v) for v in x]

options_text(options) = options === nothing ? "" :
    options isa AbstractString ? String(options) :
    isempty(options) ? "" : JSON.json(jsonable(options))

"""
    critplex_version() -> String

Version of the loaded libcritplex ("MAJOR.MINOR.PATCH").
"""
critplex_version() = unsafe_string(ccall(fn(:cpx_version), Cstring, ()))

"""
    abi_version() -> Int

ABI version of the loaded libcritplex (checked against `Critplex.ABI_VERSION` at load).
"""
abi_version() = Int(ccall(fn(:cpx_abi_version), Cint, ()))

"""
    library_path() -> String

Path (or loader name) of the libcritplex in use.
"""
library_path() = (HANDLE[] == C_NULL && load_library(); PATH[])

function _names(getter, count)
    out = Vector{String}(undef, count)
    for i in 1:count
        p = Ref{Ptr{Cchar}}(C_NULL)
        check(getter(i - 1, p))
        out[i] = take_string(p[])
    end
    return out
end

# Calls f(names_pointer) with a C array of the names (C_NULL for none) kept alive.
function _with_names(f, names)
    kept = names === nothing ? String[] : [String(n) for n in names]
    pointers = Ptr{Cchar}[pointer(n) for n in kept]
    GC.@preserve kept pointers begin
        return f(names === nothing ? C_NULL : pointer(pointers))
    end
end

function _series(x::AbstractMatrix{<:Real}, names)
    data = Matrix{Float64}(x)
    frames, regions = size(data)
    names !== nothing && length(names) != regions &&
        throw(ArgumentError("one name per region: $(length(names)) names for $regions regions"))
    series = Ref{Ptr{Cvoid}}(C_NULL)
    _with_names(names) do cnames
        check(ccall(fn(:cpx_series_create), Cint,
                    (Ptr{Float64}, Csize_t, Csize_t, Cint, Ptr{Ptr{Cchar}}, Ptr{Ptr{Cvoid}}),
                    data, frames, regions, CPX_COL_MAJOR, cnames, series))
    end
    return series[]
end

# Calls f(series) on a series handle made from x, and frees it afterwards.
function _with_series(f, x, names)
    series = _series(x, names)
    try
        return f(series)
    finally
        ccall(fn(:cpx_series_free), Cvoid, (Ptr{Cvoid},), series)
    end
end

function _matrix_values(matrix::Ptr{Cvoid})
    n = Ref{Csize_t}(0)
    check(ccall(fn(:cpx_matrix_size), Cint, (Ptr{Cvoid}, Ptr{Csize_t}), matrix, n))
    values = Matrix{Float64}(undef, n[], n[])
    check(ccall(fn(:cpx_matrix_copy), Cint, (Ptr{Cvoid}, Ptr{Float64}, Csize_t, Cint),
                matrix, values, length(values), CPX_COL_MAJOR))
    names = _names((i, p) -> ccall(fn(:cpx_matrix_name), Cint, (Ptr{Cvoid}, Csize_t, Ptr{Ptr{Cchar}}), matrix, i, p),
                   Int(n[]))
    info = Ref{Ptr{Cchar}}(C_NULL)
    check(ccall(fn(:cpx_matrix_info), Cint, (Ptr{Cvoid}, Ptr{Ptr{Cchar}}), matrix, info))
    return (values = values, names = names, info = JSON.parse(take_string(info[])))
end

"""
    connect(x; names=nothing, options=nothing) -> (values, names, info)

Connectivity matrix of time series `x` (time points down the rows, regions across).
`options`: a Dict or NamedTuple of connect options (docs/options.md: connect), e.g.
`(method = "ledoit_wolf",)`. Returns the N x N matrix, the region names and the
estimator's report (shrinkage intensity, frames used, ...).
"""
function connect(x::AbstractMatrix{<:Real}; names = nothing, options = nothing)
    matrix = Ref{Ptr{Cvoid}}(C_NULL)
    _with_series(x, names) do series
        check(ccall(fn(:cpx_connect), Cint, (Ptr{Cvoid}, Cstring, Ptr{Ptr{Cvoid}}),
                    series, options_text(options), matrix))
    end
    try
        return _matrix_values(matrix[])
    finally
        ccall(fn(:cpx_matrix_free), Cvoid, (Ptr{Cvoid},), matrix[])
    end
end

"""
    connect_bands(x; names=nothing, options) -> Vector of (band, values, names, info)

One connectivity matrix per band named in the `bands` option, in order of increasing
low band edge.
"""
function connect_bands(x::AbstractMatrix{<:Real}; names = nothing, options = nothing)
    set = Ref{Ptr{Cvoid}}(C_NULL)
    _with_series(x, names) do series
        check(ccall(fn(:cpx_connect_bands), Cint, (Ptr{Cvoid}, Cstring, Ptr{Ptr{Cvoid}}),
                    series, options_text(options), set))
    end
    try
        count = Ref{Csize_t}(0)
        check(ccall(fn(:cpx_matrix_set_count), Cint, (Ptr{Cvoid}, Ptr{Csize_t}), set[], count))
        bands = _names((i, p) -> ccall(fn(:cpx_matrix_set_band), Cint, (Ptr{Cvoid}, Csize_t, Ptr{Ptr{Cchar}}),
                                       set[], i, p), Int(count[]))
        out = []
        for (i, band) in enumerate(bands)
            matrix = Ref{Ptr{Cvoid}}(C_NULL)
            check(ccall(fn(:cpx_matrix_set_get), Cint, (Ptr{Cvoid}, Csize_t, Ptr{Ptr{Cvoid}}), set[], i - 1, matrix))
            try
                push!(out, merge((band = band,), _matrix_values(matrix[])))
            finally
                ccall(fn(:cpx_matrix_free), Cvoid, (Ptr{Cvoid},), matrix[])
            end
        end
        return out
    finally
        ccall(fn(:cpx_matrix_set_free), Cvoid, (Ptr{Cvoid},), set[])
    end
end

function _curves(result::Ptr{Cvoid})
    points = Ref{Csize_t}(0)
    columns = Ref{Csize_t}(0)
    check(ccall(fn(:cpx_sweep_shape), Cint, (Ptr{Cvoid}, Ptr{Csize_t}, Ptr{Csize_t}), result, points, columns))
    names = _names((i, p) -> ccall(fn(:cpx_sweep_column_name), Cint, (Ptr{Cvoid}, Csize_t, Ptr{Ptr{Cchar}}),
                                   result, i, p), Int(columns[]))
    curves = Dict{String,Vector{Float64}}()
    for name in names
        values = Vector{Float64}(undef, points[])
        check(ccall(fn(:cpx_sweep_curve), Cint, (Ptr{Cvoid}, Cstring, Ptr{Float64}, Csize_t),
                    result, name, values, length(values)))
        curves[name] = values
    end
    return names, curves
end

function _bars(result::Ptr{Cvoid})
    count = Ref{Csize_t}(0)
    check(ccall(fn(:cpx_sweep_bars), Cint, (Ptr{Cvoid}, Cint, Cint, Ptr{Float64}, Csize_t, Ptr{Csize_t}),
                result, Cint(-1), CPX_COL_MAJOR, C_NULL, 0, count))
    bars = Matrix{Float64}(undef, count[], length(BAR_COLUMNS))
    check(ccall(fn(:cpx_sweep_bars), Cint, (Ptr{Cvoid}, Cint, Cint, Ptr{Float64}, Csize_t, Ptr{Csize_t}),
                result, Cint(-1), CPX_COL_MAJOR, bars, length(bars), count))
    return bars
end

function _node_curvature(result::Ptr{Cvoid})
    points = Ref{Csize_t}(0)
    nodes = Ref{Csize_t}(0)
    check(ccall(fn(:cpx_sweep_node_curvature), Cint,
                (Ptr{Cvoid}, Cint, Ptr{Float64}, Csize_t, Ptr{Csize_t}, Ptr{Csize_t}),
                result, CPX_COL_MAJOR, C_NULL, 0, points, nodes))
    kappa = Matrix{Float64}(undef, points[], nodes[])
    check(ccall(fn(:cpx_sweep_node_curvature), Cint,
                (Ptr{Cvoid}, Cint, Ptr{Float64}, Csize_t, Ptr{Csize_t}, Ptr{Csize_t}),
                result, CPX_COL_MAJOR, kappa, length(kappa), points, nodes))
    return kappa
end

"""
    sweep(m; names=nothing, options=nothing) -> (columns, curves, bars, node_curvature, document)

Density sweep of a symmetric matrix. `curves` maps each column name (`density`,
`threshold`, `edges`, `chi`, `cliques_k`, `betti_k`, ...) to a `Vector{Float64}` on the
grid; `bars` is a bars x 7 matrix (columns `Critplex.BAR_COLUMNS`) when the options ask
for `homology`, else `nothing`; `node_curvature` is points x nodes when they ask for
`curvature`; `document` is the whole result parsed from JSON (exact counts as decimal
strings).
"""
function sweep(m::AbstractMatrix{<:Real}; names = nothing, options = nothing)
    data = Matrix{Float64}(m)
    size(data, 1) == size(data, 2) || throw(ArgumentError("matrix must be square"))
    size(data, 1) == length(something(names, axes(data, 1))) ||
        throw(ArgumentError("one name per region: $(length(names)) names for $(size(data, 1)) regions"))
    matrix = Ref{Ptr{Cvoid}}(C_NULL)
    _with_names(names) do cnames
        check(ccall(fn(:cpx_matrix_create), Cint, (Ptr{Float64}, Csize_t, Cint, Ptr{Ptr{Cchar}}, Ptr{Ptr{Cvoid}}),
                    data, size(data, 1), CPX_COL_MAJOR, cnames, matrix))
    end
    result = Ref{Ptr{Cvoid}}(C_NULL)
    try
        check(ccall(fn(:cpx_sweep_run), Cint, (Ptr{Cvoid}, Cstring, Ptr{Cvoid}, Ptr{Cvoid}, Ptr{Ptr{Cvoid}}),
                    matrix[], options_text(options), C_NULL, C_NULL, result))
    finally
        ccall(fn(:cpx_matrix_free), Cvoid, (Ptr{Cvoid},), matrix[])
    end
    try
        json = Ref{Ptr{Cchar}}(C_NULL)
        check(ccall(fn(:cpx_sweep_json), Cint, (Ptr{Cvoid}, Ptr{Ptr{Cchar}}), result[], json))
        document = JSON.parse(take_string(json[]))
        columns, curves = _curves(result[])
        bars = haskey(document, "homology") ? _bars(result[]) : nothing
        kappa = haskey(document, "curvature") ? _node_curvature(result[]) : nothing
        return (columns = columns, curves = curves, bars = bars, node_curvature = kappa, document = document)
    finally
        ccall(fn(:cpx_sweep_free), Cvoid, (Ptr{Cvoid},), result[])
    end
end

# A document's column table ({"name": [values]}) with JSON nulls as NaN.
function _numeric_columns(curves)
    out = Dict{String,Vector{Float64}}()
    for (name, values) in curves
        values isa AbstractVector || continue
        all(v -> v === nothing || v isa Number || v isa AbstractString, values) || continue
        out[name] = [v === nothing ? NaN : v isa AbstractString ? parse(Float64, v) : Float64(v) for v in values]
    end
    return out
end

# The group-test table the comparison call wrote (the C interface has no typed accessor
# for it yet): column name => values, numbers as Float64 (NaN where missing), else text.
function _read_tsv(path::AbstractString)
    lines = [rstrip(l, '\r') for l in split(read(path, String), '\n') if !isempty(l)]
    header = String.(split(lines[1], '\t'))
    rows = [split(l, '\t') for l in lines[2:end]]
    table = Dict{String,Vector}()
    for (j, name) in enumerate(header)
        cells = [String(r[j]) for r in rows]
        numbers = [c in ("n/a", "NA", "NaN", "") ? NaN : tryparse(Float64, c) for c in cells]
        table[name] = any(isnothing, numbers) ? cells : Float64[x for x in numbers]
    end
    return header, table
end

"""
    run_subject(config; out_dir=nothing) -> (document, bands)

One subject from time series to topology (docs/options.md: subject); `config` is a Dict,
a NamedTuple or JSON text. Returns the subject document (parsed JSON) and per band
`(name, curves)` with the curves as `Vector{Float64}`. When `out_dir` is given, the
document and its TSV twins are written there too.
"""
function run_subject(config; out_dir::Union{Nothing,AbstractString} = nothing)
    doc = Ref{Ptr{Cchar}}(C_NULL)
    check(ccall(fn(:cpx_subject_run), Cint, (Cstring, Ptr{Cchar}, Ptr{Cvoid}, Ptr{Cvoid}, Ptr{Ptr{Cchar}}),
                options_text(config), out_dir === nothing ? C_NULL : String(out_dir),
                C_NULL, C_NULL, doc))
    document = JSON.parse(take_string(doc[]))
    bands = [(name = get(b, "band", ""), curves = _numeric_columns(get(b, "curves", Dict())))
             for b in get(document, "bands", [])]
    return (document = document, bands = bands)
end

"""
    run_cohort(manifest, config, out_dir; workers=0, force=false) -> summary

Every subject of a manifest TSV with one shared config (docs/cli.md: critplex cohort) into `out_dir`.
Unchanged finished subjects are skipped. Returns the run summary (`done`, `skipped`,
`failed`, `subjects`) parsed from JSON.
"""
function run_cohort(manifest::AbstractString, config, out_dir::AbstractString; workers::Integer = 0,
                    force::Bool = false)
    summary = Ref{Ptr{Cchar}}(C_NULL)
    check(ccall(fn(:cpx_cohort_run), Cint,
                (Cstring, Cstring, Cstring, Cstring, Ptr{Cvoid}, Ptr{Cvoid}, Ptr{Ptr{Cchar}}),
                manifest, options_text(config), out_dir,
                JSON.json(Dict("workers" => workers, "force" => force)), C_NULL, C_NULL, summary))
    return JSON.parse(take_string(summary[]))
end

"""
    compare(dir; options=nothing) -> (columns, tests, document)

Group comparison of a cohort run's folder (docs/options.md: compare); writes
`group_comparison.json` and `group_tests.tsv` there. `tests` maps each column of the
group-test table (in the order of `columns`) to a vector, one entry per test: numbers as
`Float64` (NaN where a test has no value), other columns as text.
"""
function compare(dir::AbstractString; options = nothing)
    out = Ref{Ptr{Cchar}}(C_NULL)
    check(ccall(fn(:cpx_cohort_compare), Cint, (Cstring, Cstring, Ptr{Ptr{Cchar}}),
                dir, options_text(options), out))
    document = JSON.parse(take_string(out[]))
    columns, tests = _read_tsv(joinpath(dir, "group_tests.tsv"))
    return (columns = columns, tests = tests, document = document)
end

"""
    report(dir; options=nothing) -> String

Writes the HTML report of a compared cohort folder (docs/outputs.md: report) and returns its path.
"""
function report(dir::AbstractString; options = nothing)
    path = Ref{Ptr{Cchar}}(C_NULL)
    check(ccall(fn(:cpx_cohort_report), Cint, (Cstring, Cstring, Ptr{Ptr{Cchar}}),
                dir, options_text(options), path))
    return take_string(path[])
end

"""
    simulate_study(dir; options=nothing) -> summary

Writes an invented two-group study (time series, manifest, cohort config, model) into
`dir` (docs/demo-study.md) and returns its summary.
"""
function simulate_study(dir::AbstractString; options = nothing)
    summary = Ref{Ptr{Cchar}}(C_NULL)
    check(ccall(fn(:cpx_simulate_study), Cint, (Cstring, Cstring, Ptr{Ptr{Cchar}}),
                options_text(options), dir, summary))
    return JSON.parse(take_string(summary[]))
end

end # module
