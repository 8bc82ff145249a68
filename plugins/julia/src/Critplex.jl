"""
Julia binding of critplex through `ccall` on the C interface (libcritplex).

Set `ENV["CRITPLEX_LIBRARY"]` to the library's path before loading, or install it where
the system loader finds `libcritplex.so.1`. Julia arrays are column-major and cross as
`CPX_COL_MAJOR` without copies. Options are JSON text.

Research software, not a medical device: not for clinical decisions.
"""
module Critplex

export critplex_version, connect, sweep, run_subject

const libcritplex = get(ENV, "CRITPLEX_LIBRARY", "libcritplex.so.1")
const CPX_COL_MAJOR = Cint(1)

struct CritplexError <: Exception
    status::Cint
    message::String
end
Base.showerror(io::IO, e::CritplexError) = print(io, "critplex: ", e.message)

function check(status::Cint)
    status == 0 && return nothing
    msg = unsafe_string(ccall((:cpx_last_error, libcritplex), Cstring, ()))
    throw(CritplexError(status, msg))
end

take_string(p::Ptr{Cchar}) = try
    unsafe_string(p)
finally
    ccall((:cpx_string_free, libcritplex), Cvoid, (Ptr{Cchar},), p)
end

critplex_version() = unsafe_string(ccall((:cpx_version, libcritplex), Cstring, ()))

"""
    connect(x::AbstractMatrix{<:Real}; options="") -> Matrix{Float64}

Connectivity matrix of time series `x` (time points down the rows, regions across).
"""
function connect(x::AbstractMatrix{<:Real}; options::AbstractString = "")
    data = Matrix{Float64}(x)
    frames, regions = size(data)
    series = Ref{Ptr{Cvoid}}(C_NULL)
    check(ccall((:cpx_series_create, libcritplex), Cint,
                (Ptr{Float64}, Csize_t, Csize_t, Cint, Ptr{Cvoid}, Ptr{Ptr{Cvoid}}),
                data, frames, regions, CPX_COL_MAJOR, C_NULL, series))
    matrix = Ref{Ptr{Cvoid}}(C_NULL)
    try
        check(ccall((:cpx_connect, libcritplex), Cint, (Ptr{Cvoid}, Cstring, Ptr{Ptr{Cvoid}}),
                    series[], options, matrix))
    finally
        ccall((:cpx_series_free, libcritplex), Cvoid, (Ptr{Cvoid},), series[])
    end
    try
        n = Ref{Csize_t}(0)
        check(ccall((:cpx_matrix_size, libcritplex), Cint, (Ptr{Cvoid}, Ptr{Csize_t}), matrix[], n))
        out = Matrix{Float64}(undef, n[], n[])
        check(ccall((:cpx_matrix_copy, libcritplex), Cint, (Ptr{Cvoid}, Ptr{Float64}, Csize_t, Cint),
                    matrix[], out, length(out), CPX_COL_MAJOR))
        return out
    finally
        ccall((:cpx_matrix_free, libcritplex), Cvoid, (Ptr{Cvoid},), matrix[])
    end
end

"""
    sweep(m::AbstractMatrix{<:Real}; options="") -> (curves_tsv::String, json::String)

Density sweep of a symmetric matrix: the curves as TSV text and the whole result as
JSON text (exact counts as decimal strings); parse them with your preferred packages.
"""
function sweep(m::AbstractMatrix{<:Real}; options::AbstractString = "")
    data = Matrix{Float64}(m)
    size(data, 1) == size(data, 2) || throw(ArgumentError("matrix must be square"))
    matrix = Ref{Ptr{Cvoid}}(C_NULL)
    check(ccall((:cpx_matrix_create, libcritplex), Cint, (Ptr{Float64}, Csize_t, Cint, Ptr{Cvoid}, Ptr{Ptr{Cvoid}}),
                data, size(data, 1), CPX_COL_MAJOR, C_NULL, matrix))
    result = Ref{Ptr{Cvoid}}(C_NULL)
    try
        check(ccall((:cpx_sweep_run, libcritplex), Cint, (Ptr{Cvoid}, Cstring, Ptr{Cvoid}, Ptr{Cvoid}, Ptr{Ptr{Cvoid}}),
                    matrix[], options, C_NULL, C_NULL, result))
    finally
        ccall((:cpx_matrix_free, libcritplex), Cvoid, (Ptr{Cvoid},), matrix[])
    end
    try
        tsv = Ref{Ptr{Cchar}}(C_NULL)
        json = Ref{Ptr{Cchar}}(C_NULL)
        check(ccall((:cpx_sweep_curves_tsv, libcritplex), Cint, (Ptr{Cvoid}, Ptr{Ptr{Cchar}}), result[], tsv))
        curves = take_string(tsv[])
        check(ccall((:cpx_sweep_json, libcritplex), Cint, (Ptr{Cvoid}, Ptr{Ptr{Cchar}}), result[], json))
        return (curves, take_string(json[]))
    finally
        ccall((:cpx_sweep_free, libcritplex), Cvoid, (Ptr{Cvoid},), result[])
    end
end

"""
    run_subject(config_json; out_dir=nothing) -> String

Runs one subject from a JSON config (README: subject config); returns the subject
document as JSON text and, when `out_dir` is given, writes the outputs there.
"""
function run_subject(config_json::AbstractString; out_dir::Union{Nothing,AbstractString} = nothing)
    doc = Ref{Ptr{Cchar}}(C_NULL)
    dir = out_dir === nothing ? "" : String(out_dir)
    GC.@preserve dir begin
        dir_ptr = out_dir === nothing ? Ptr{Cchar}(C_NULL) : pointer(dir)
        check(ccall((:cpx_subject_run, libcritplex), Cint,
                    (Cstring, Ptr{Cchar}, Ptr{Cvoid}, Ptr{Cvoid}, Ptr{Ptr{Cchar}}),
                    config_json, dir_ptr, C_NULL, C_NULL, doc))
    end
    return take_string(doc[])
end

end # module
