"""Static check of the Julia module (Julia is not packaged for this Debian, so the module
cannot run here): every `ccall` is compared with the header's prototype (result type,
argument count and each argument's type), every call passes as many values as it
declares types, the exported functions have docstrings and are named in the Julia
README, and Project.toml has [compat] entries. A deliberately broken copy of the module
must fail the same check.

    check_julia.py HEADER JULIA_DIR        (exit status 0 when the module agrees)
    check_julia.py --self-test HEADER JULIA_DIR
"""
import os
import re
import sys

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import c_header  # noqa: E402

# Julia type -> the kinds (c_header's vocabulary) it may stand for in a ccall.
_OPAQUE = {"ptr:handle", "ptr:void", "ptr:fn"}
JULIA_KINDS = {
    "Cvoid": {"void"}, "Cint": {"i32"}, "Int32": {"i32"}, "Cuint": {"u32"}, "UInt32": {"u32"},
    "Csize_t": {"size"}, "Cdouble": {"f64"}, "Float64": {"f64"},
    "Cstring": {"ptr:char"}, "Ptr{Cchar}": {"ptr:char"}, "Ptr{UInt8}": {"ptr:char"},
    "Ptr{Cvoid}": _OPAQUE,
    "Ptr{Float64}": {"ptr:f64"}, "Ptr{Cdouble}": {"ptr:f64"}, "Ref{Float64}": {"ptr:f64"}, "Ref{Cdouble}": {"ptr:f64"},
    "Ptr{Csize_t}": {"ptr:size"}, "Ref{Csize_t}": {"ptr:size"},
    "Ptr{UInt32}": {"ptr:u32"},
    "Ptr{Ptr{Cvoid}}": {"ptr:ptr:handle"}, "Ref{Ptr{Cvoid}}": {"ptr:ptr:handle"},
    "Ptr{Ptr{Cchar}}": {"ptr:ptr:char"}, "Ref{Ptr{Cchar}}": {"ptr:ptr:char"}, "Ptr{Cstring}": {"ptr:ptr:char"},
    "Ptr{Ptr{UInt8}}": {"ptr:ptr:char"},
}


def split_top_level(text):
    """Split at commas outside (), {}, [] and string literals."""
    parts, depth, current, quote = [], 0, [], None
    i = 0
    while i < len(text):
        ch = text[i]
        if quote:
            current.append(ch)
            if ch == "\\":
                current.append(text[i + 1])
                i += 1
            elif ch == quote:
                quote = None
        elif ch == '"':
            quote = ch
            current.append(ch)
        elif ch in "({[":
            depth += 1
            current.append(ch)
        elif ch in ")}]":
            depth -= 1
            current.append(ch)
        elif ch == "," and depth == 0:
            parts.append("".join(current).strip())
            current = []
        else:
            current.append(ch)
        i += 1
    if "".join(current).strip():
        parts.append("".join(current).strip())
    return parts


def ccalls(source):
    """[(line, function expression, result type, [argument types], [values])] of every ccall."""
    out = []
    for m in re.finditer(r"\bccall\(", source):
        start = m.end()
        depth, i = 1, start
        while depth:
            depth += {"(": 1, ")": -1}.get(source[i], 0)
            i += 1
        parts = split_top_level(source[start:i - 1])
        line = source.count("\n", 0, m.start()) + 1
        if len(parts) < 3:
            raise ValueError("line %d: a ccall needs a function, a result type and argument types" % line)
        types = parts[2].strip()
        if not (types.startswith("(") and types.endswith(")")):
            raise ValueError("line %d: argument types must be a tuple, got %r" % (line, types))
        out.append((line, parts[0], parts[1], split_top_level(types[1:-1]), parts[3:]))
    return out


def check_module(header_text, julia_dir):
    """Every disagreement as a message (empty when the module agrees with the header)."""
    protos = c_header.prototypes(header_text)
    errors = []
    source = open(os.path.join(julia_dir, "src", "Critplex.jl")).read()
    calls = ccalls(source)
    if not calls:
        errors.append("no ccall found")
    seen = set()
    for line, function, result, arg_types, values in calls:
        m = re.fullmatch(r"fn\(:(cpx_\w+)\)", function)
        if not m:
            errors.append("line %d: the function must be written fn(:cpx_name), got %r" % (line, function))
            continue
        name = m.group(1)
        seen.add(name)
        if name not in protos:
            errors.append("line %d: %s is not declared in critplex.h" % (line, name))
            continue
        c_result, c_args = protos[name]
        if c_result not in JULIA_KINDS.get(result, set()):
            errors.append("line %d: %s returns %s in C, declared %s" % (line, name, c_result, result))
        if len(arg_types) != len(c_args):
            errors.append("line %d: %s takes %d arguments in C, declared %d" % (line, name, len(c_args), len(arg_types)))
        for k, (jt, (ck, cname)) in enumerate(zip(arg_types, c_args)):
            if ck not in JULIA_KINDS.get(jt, set()):
                errors.append("line %d: %s argument %d (%s) is %s in C, declared %s" % (line, name, k + 1, cname, ck, jt))
        if len(values) != len(arg_types):
            errors.append("line %d: %s declares %d argument types but passes %d values"
                          % (line, name, len(arg_types), len(values)))
    exports = []
    for m in re.finditer(r"^export\s+((?:[\w!]+\s*,\s*\n?\s*)*[\w!]+)", source, flags=re.M):
        exports += [e.strip() for e in m.group(1).replace("\n", " ").split(",") if e.strip()]
    if not exports:
        errors.append("no export list found")
    readme = open(os.path.join(julia_dir, "README.md")).read()
    for name in exports:
        if not re.search(r'"""\s*\n\s*%s\b' % re.escape(name), source) and not re.search(
                r'"""\s*\n[^"]*?\n"""\s*\n\s*struct\s+%s\b' % re.escape(name), source):
            errors.append("exported %s has no docstring" % name)
        if not re.search(r"`%s\b" % re.escape(name), readme):
            errors.append("exported %s is not named in plugins/julia/README.md" % name)
    project = open(os.path.join(julia_dir, "Project.toml")).read()
    deps = re.search(r"^\[deps\]\n(.*?)(?:^\[|\Z)", project, flags=re.M | re.S)
    compat = re.search(r"^\[compat\]\n(.*?)(?:^\[|\Z)", project, flags=re.M | re.S)
    if not compat:
        errors.append("Project.toml has no [compat] section")
    else:
        declared = set(re.findall(r"^(\w+)\s*=", compat.group(1), flags=re.M))
        if "julia" not in declared:
            errors.append("[compat] has no julia entry")
        stdlib = {"Libdl"}
        for dep in re.findall(r"^(\w+)\s*=", deps.group(1), flags=re.M) if deps else []:
            if dep not in declared and dep not in stdlib:
                errors.append("[compat] has no entry for the dependency %s" % dep)
    return errors, len(calls), len(seen)


def main(argv):
    self_test = argv[:1] == ["--self-test"]
    header, julia_dir = (argv[1:] if self_test else argv)[:2]
    header_text = open(header).read()
    errors, count, functions = check_module(header_text, julia_dir)
    if errors:
        print("Julia module disagrees with %s:\n  %s" % (header, "\n  ".join(errors)), file=sys.stderr)
        return 1
    print("Julia module: %d ccalls of %d C functions agree with the header" % (count, functions))
    if self_test:
        return self_test_broken_copies(header_text, julia_dir)
    return 0


def self_test_broken_copies(header_text, julia_dir):
    """Each deliberately broken copy of the module must fail the check."""
    import shutil
    import tempfile
    source = open(os.path.join(julia_dir, "src", "Critplex.jl")).read()
    breakages = {
        "a size_t declared as Cint": ("(Ptr{Cvoid}, Ptr{Float64}, Csize_t, Cint),", "(Ptr{Cvoid}, Ptr{Float64}, Cint, Cint),"),
        "an argument dropped": ("ccall(fn(:cpx_connect), Cint, (Ptr{Cvoid}, Cstring, Ptr{Ptr{Cvoid}}),",
                                "ccall(fn(:cpx_connect), Cint, (Ptr{Cvoid}, Ptr{Ptr{Cvoid}}),"),
        "a wrong result type": ("ccall(fn(:cpx_abi_version), Cint, ())", "ccall(fn(:cpx_abi_version), Csize_t, ())"),
        "a string where a handle goes": ("ccall(fn(:cpx_sweep_free), Cvoid, (Ptr{Cvoid},)",
                                         "ccall(fn(:cpx_sweep_free), Cvoid, (Cstring,)"),
        "a function the header lacks": ("fn(:cpx_matrix_size)", "fn(:cpx_matrix_dimension)"),
    }
    failures = 0
    for what, (old, new) in breakages.items():
        if old not in source:
            print("self-test: the module no longer contains the text to break (%s): %r" % (what, old), file=sys.stderr)
            return 1
        with tempfile.TemporaryDirectory() as tmp:
            shutil.copytree(julia_dir, os.path.join(tmp, "julia"))
            with open(os.path.join(tmp, "julia", "src", "Critplex.jl"), "w") as f:
                f.write(source.replace(old, new, 1))
            errors, _, _ = check_module(header_text, os.path.join(tmp, "julia"))
        if errors:
            print("self-test: broken copy (%s) fails as it should: %s" % (what, errors[0]))
        else:
            print("self-test: broken copy (%s) PASSED the check" % what, file=sys.stderr)
            failures += 1
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
