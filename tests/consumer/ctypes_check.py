"""Loads the installed libcritplex with ctypes: the ABI check passes, a correlation matrix
is right, and every ctypes signature the Python package declares agrees with the
installed header (result type, argument count, each argument's kind)."""
import ctypes
import glob
import os
import sys

import numpy as np

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "hosts"))
import c_header  # noqa: E402
import critplex  # noqa: E402
from critplex import _library  # noqa: E402

x = np.random.default_rng(7).standard_normal((40, 6))
m = critplex.connect(x)
# reference: numpy.corrcoef (Debian python3-numpy)
assert np.max(np.abs(m.values - np.corrcoef(x, rowvar=False))) < 1e-12
assert critplex.abi_version() == _library.ABI_VERSION

# ctypes type -> the kinds of c_header it may stand for.
c = ctypes
SCALARS = {c.c_int: {"i32"}, c.c_int32: {"i32"}, c.c_uint32: {"u32"}, c.c_size_t: {"size"}, c.c_double: {"f64"},
           None: {"void"}}


def kinds(t):
    if t in SCALARS:
        return SCALARS[t]
    if t is c.c_char_p:
        return {"ptr:char"}
    if t is c.c_void_p:  # any single pointer: handles, buffers, strings to free, name arrays
        return {"ptr:handle", "ptr:void", "ptr:f64", "ptr:char", "ptr:u32", "ptr:ptr:char", "ptr:size"}
    if isinstance(t, type) and issubclass(t, c._CFuncPtr):
        return {"ptr:fn"}
    if isinstance(t, type) and issubclass(t, c._Pointer):
        inner = t._type_
        if inner is c.c_void_p:
            return {"ptr:ptr:handle", "ptr:ptr:char"}
        return {"ptr:" + k for k in kinds(inner) if not k.startswith("ptr:") and k != "void"}
    raise ValueError("unknown ctypes type %r" % (t,))


prefix = os.path.dirname(os.path.dirname(os.path.realpath(critplex.library_path())))
headers = glob.glob(os.path.join(prefix, "include", "critplex", "critplex.h"))
assert headers, "no installed critplex.h beside %s" % critplex.library_path()
protos = c_header.prototypes(open(headers[0]).read())
errors = []
for name, (args, result) in _library.SIGNATURES.items():
    if name not in protos:
        errors.append("%s is not in the header" % name)
        continue
    c_result, c_args = protos[name]
    if c_result not in kinds(result):
        errors.append("%s returns %s in C, declared %r" % (name, c_result, result))
    if len(args) != len(c_args):
        errors.append("%s takes %d arguments in C, declared %d" % (name, len(c_args), len(args)))
    for i, (t, (ck, cname)) in enumerate(zip(args, c_args)):
        if ck not in kinds(t):
            errors.append("%s argument %d (%s) is %s in C, declared %r" % (name, i + 1, cname, ck, t))
assert not errors, "Python signatures disagree with %s:\n  %s" % (headers[0], "\n  ".join(errors))
print("consumer ok: ctypes through the installed library %s; %d signatures agree with the header"
      % (critplex.version(), len(_library.SIGNATURES)))
