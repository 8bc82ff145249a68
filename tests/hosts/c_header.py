"""Reads the prototypes of critplex.h (every `CPX_API` declaration) into a form the host
checks compare against: each type reduced to a small vocabulary of kinds.

Kinds: "void", "i32" (int, int32_t, the enums), "u32", "size", "f64", "ptr:<pointee>" with
pointee "char", "double", "size", "u32", "handle" (an opaque cpx_ struct), "fn" (a callback),
and a further "ptr:" per extra level of indirection ("ptr:ptr:char" is char**).
"""
import re

_INT_KINDS = {"int": "i32", "int32_t": "i32", "cpx_status": "i32", "cpx_layout": "i32",
              "uint32_t": "u32", "size_t": "size", "double": "f64", "void": "void", "char": "char",
              "int64_t": "i64", "uint64_t": "u64"}


def strip_comments(text):
    text = re.sub(r"/\*.*?\*/", " ", text, flags=re.S)
    return re.sub(r"//[^\n]*", " ", text)


def type_kind(c_type):
    """The kind of one C type written as in the header ("const cpx_series*", "char**", ...)."""
    t = c_type.replace("const", " ").strip()
    stars = t.count("*")
    base = t.replace("*", " ").split()
    if len(base) != 1:
        raise ValueError("cannot read the C type %r" % c_type)
    base = base[0]
    if base == "cpx_progress_fn":
        kind = "fn"
    elif base in _INT_KINDS:
        kind = _INT_KINDS[base]
    elif base.startswith("cpx_"):
        kind = "handle"
    else:
        raise ValueError("unknown C type %r" % c_type)
    if stars == 0:
        if kind in ("handle", "char"):
            raise ValueError("a %s passed by value: %r" % (kind, c_type))
        return "ptr:fn" if kind == "fn" else kind
    if kind == "fn":
        kind = "ptr:fn"
    return "ptr:" * stars + kind


def _split_parameter(p):
    """('const double*', 'data') from 'const double* data'; a lone type has no name."""
    p = " ".join(p.split())
    m = re.match(r"^(.*?[\s\*])([A-Za-z_]\w*)$", p)
    if m and m.group(1).strip() and m.group(2) not in _INT_KINDS and not m.group(2).startswith("cpx_"):
        return m.group(1).strip(), m.group(2)
    return p, ""


def prototypes(header_text):
    """{name: (result kind, [(parameter kind, parameter name), ...])} of every CPX_API call."""
    text = strip_comments(header_text)
    text = "\n".join(line for line in text.splitlines() if not line.lstrip().startswith("#"))
    out = {}
    for m in re.finditer(r"CPX_API\s+([^;{]*?)\b(cpx_\w+)\s*\(([^)]*)\)\s*;", text, flags=re.S):
        result, name, params = m.group(1).strip(), m.group(2), m.group(3).strip()
        args = []
        if params and params != "void":
            for p in params.split(","):
                c_type, pname = _split_parameter(p.strip())
                args.append((type_kind(c_type), pname))
        out[name] = (type_kind(result), args)
    if not out:
        raise ValueError("no CPX_API prototypes found")
    return out
