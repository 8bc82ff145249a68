/*
 * critplex: topology of functional brain networks, behind a stable C interface.
 *
 * This is the only public header. It is C99 and also valid C++.
 *
 * Conventions (they hold for every function below):
 *  - Every call that can fail returns cpx_status; CPX_OK (0) means success. On failure
 *    cpx_last_error() returns a message for the calling thread that names the argument,
 *    file, line or value at fault. Outputs are left untouched on failure.
 *  - Objects are opaque handles made by a create, read or compute call and released by the
 *    matching free call, which accepts NULL.
 *  - Options are JSON text (an object; NULL or "" means defaults). Unknown keys are an
 *    error, so a typo never passes silently. docs/options.md documents every key.
 *  - Arrays going in are a pointer, explicit sizes and a cpx_layout flag (MATLAB, R and
 *    Julia hold matrices column-major; C and NumPy row-major by default).
 *  - Arrays coming out use two calls: ask the size, then copy into the caller's buffer,
 *    whose length the caller passes; a short buffer is an error, never an overrun.
 *  - Strings the library allocates (char** outputs) are released with cpx_string_free.
 *  - Long calls take an optional progress callback; NULL is always allowed. A non-zero
 *    return from the callback cancels the call, which then returns CPX_ERR_CANCELLED.
 *  - Independent handles may be used from different threads at the same time.
 *  - Each call's block below says what it does, who owns every pointer (inputs are
 *    borrowed for the call only), the statuses it returns, its thread rule and the
 *    version that added it. Any status-returning call may also return CPX_ERR_MEMORY or
 *    CPX_ERR_INTERNAL; blocks do not repeat them. Calls since 0.1 report a NULL handle
 *    or a short buffer as CPX_ERR_ARGUMENT (unchanged, for existing callers); calls
 *    since 0.2 use CPX_ERR_BUFFER and the two-call shape of cpx_build_info.
 */
#ifndef CRITPLEX_H
#define CRITPLEX_H

#include <stddef.h>
#include <stdint.h>

#include <critplex/critplex_version.h>

#if defined(_WIN32)
#  if defined(CRITPLEX_BUILDING)
#    define CPX_API __declspec(dllexport)
#  else
#    define CPX_API __declspec(dllimport)
#  endif
#elif defined(__GNUC__)
#  define CPX_API __attribute__((visibility("default")))
#else
#  define CPX_API
#endif

#ifdef __cplusplus
extern "C" {
#endif

/* ------------------------------------------------------------------------------------ */
/* Status, errors, versions, memory                                                      */
/* ------------------------------------------------------------------------------------ */

typedef enum cpx_status {
  CPX_OK = 0,
  CPX_ERR_ARGUMENT = 1,  /* a bad argument or option value */
  CPX_ERR_IO = 2,        /* a file cannot be opened, read or written */
  CPX_ERR_PARSE = 3,     /* a file or text has the wrong format */
  CPX_ERR_DATA = 4,      /* well-formed input whose values cannot be used */
  CPX_ERR_BUDGET = 5,    /* a budget was exhausted where a partial result is not allowed */
  CPX_ERR_CANCELLED = 6, /* the progress callback asked to stop */
  CPX_ERR_OVERFLOW = 7,  /* an exact value does not fit the requested output type */
  CPX_ERR_MEMORY = 8,    /* out of memory */
  CPX_ERR_INTERNAL = 9,  /* a bug in critplex: please report it with the message */
  CPX_ERR_BUFFER = 10,   /* a caller's buffer is too small; nothing was written (since 0.2) */
  CPX_ERR_MISUSE = 11    /* a NULL handle, or a call out of order (since 0.2) */
} cpx_status;

typedef enum cpx_layout {
  CPX_ROW_MAJOR = 0,   /* element (i, j) at i * columns + j */
  CPX_COL_MAJOR = 1,   /* element (i, j) at j * rows + i */
  /* Not a layout: widens the enum to a full int so that any value a caller passes is a
   * valid value of the type, and the library can refuse it with CPX_ERR_ARGUMENT. */
  CPX_LAYOUT_INT_RANGE_ = 0x7fffffff
} cpx_layout;

/* Progress: fraction in [0, 1]; return non-zero to cancel. */
typedef int (*cpx_progress_fn)(double fraction, void* user);

/* cpx_version: Version of the library actually loaded ("MAJOR.MINOR.PATCH"); compare with
 * CPX_VERSION_STRING of the header you compiled against.
 * Ownership: static storage; never free it. Cannot fail.
 * Threads: any thread. Since 0.1. */
CPX_API const char* cpx_version(void);
/* cpx_abi_version: ABI version of the library actually loaded. A binding compares it with the
 * CPX_ABI_VERSION it was built for at load time and refuses to go on when they differ.
 * Cannot fail. Threads: any thread. Since 0.1. */
CPX_API int cpx_abi_version(void);
/* cpx_last_error: Message of the last failed call on the calling thread ("" when the last call
 * succeeded); it names the function and the argument, file, line or value at fault.
 * Ownership: thread-local storage owned by the library, valid until the next critplex
 * call on this thread; copy it to keep it. Never free it. Cannot fail.
 * Threads: each thread sees its own message. Since 0.1. */
CPX_API const char* cpx_last_error(void);
/* cpx_status_name: Short name of a status ("CPX_ERR_IO"); "CPX_ERR_UNKNOWN" for a value that is
 * not a cpx_status. Ownership: static storage; never free it. Cannot fail.
 * Threads: any thread. Since 0.1. */
CPX_API const char* cpx_status_name(cpx_status status);
/* cpx_string_free: Releases a string the library allocated (every char** output of the calls
 * below); NULL is allowed. Never pass it a string from cpx_version, cpx_last_error or
 * cpx_status_name, nor a caller's buffer. Cannot fail.
 * Threads: any thread, once per string. Since 0.1. */
CPX_API void cpx_string_free(char* text);
/* Deletes the temporary files the library is writing at this moment (every output is
 * written as "<path>.tmp-<pid>-<n>" and renamed into place). Async-signal-safe: meant for a
 * SIGINT/SIGTERM handler of the host, which then ends the process (the interrupted calls
 * must not continue). Outputs already renamed into place stay. Since 0.3. */
CPX_API void cpx_remove_partial_files(void);

/* cpx_build_info: what the loaded library was built with, as a JSON object:
 *   {"version", "abi", "compiler", "cplusplus", "assertions", "instruction_paths": [...],
 *    "threads"}; instruction_paths lists the optional CPU paths this machine takes
 *   ("popcnt", "bmi2").
 * Two-call shape (shared by every call that fills a caller's text buffer):
 *   call with out = NULL, capacity = 0 to get *needed (bytes including the final NUL);
 *   then call with a buffer of at least *needed bytes. *needed is always set.
 * Ownership: the caller owns `out`; nothing is allocated.
 * Returns CPX_OK, CPX_ERR_BUFFER (capacity < *needed; `out` untouched),
 *   CPX_ERR_ARGUMENT (`needed` NULL, or `out` NULL with capacity > 0).
 * Threads: safe from any thread. Since 0.3. */
CPX_API cpx_status cpx_build_info(char* out, size_t capacity, size_t* needed);

/* cpx_options_schema: the reference of every option key the library reads, as JSON:
 *   [{"name", "where", "used_by", "summary", "keys": [{"key", "type", "default",
 *     "default_note"?, "choices"?, "range"?, "meaning"}]}].
 * `section` NULL or "" gives every section, else one section by its dotted name
 * ("sweep.cliques"); an unknown name is CPX_ERR_ARGUMENT listing the known ones.
 * The parsers read the same tables, so this is what they accept.
 * Two-call shape as cpx_build_info. Returns CPX_OK, CPX_ERR_BUFFER, CPX_ERR_ARGUMENT.
 * Threads: safe from any thread. Since 0.3. */
CPX_API cpx_status cpx_options_schema(const char* section, char* out, size_t capacity, size_t* needed);

/* ------------------------------------------------------------------------------------ */
/* Time series: T frames (rows) by N regions (columns)                                   */
/* ------------------------------------------------------------------------------------ */

typedef struct cpx_series cpx_series;

/* cpx_series_create: Makes a series from frames x regions values given in `layout`, copying them;
 * region_names (borrowed; may be NULL: names become "R1", "R2", ...) has `regions` entries.
 * Ownership: data and names stay the caller's; *out is a new series for cpx_series_free.
 * Returns CPX_OK, CPX_ERR_ARGUMENT (NULL data or out, bad layout, a NULL name),
 * CPX_ERR_DATA (values the stages cannot use, e.g. NaN). Threads: any thread. Since 0.1. */
CPX_API cpx_status cpx_series_create(const double* data, size_t frames, size_t regions, cpx_layout layout,
                                     const char* const* region_names, cpx_series** out);
/* cpx_series_read: Reads TSV/CSV with a header row of region names, whitespace-separated text without a
 * header, or NPY (float64/float32, C or Fortran order). Options: docs/options.md
 * ("format": "auto"|"tsv"|"csv"|"text"|"npy", "header": "auto"|true|false).
 * Ownership: path and options borrowed; *out is a new series for cpx_series_free.
 * Returns CPX_OK, CPX_ERR_ARGUMENT (NULL path or out, bad option), CPX_ERR_IO, CPX_ERR_PARSE
 * (the message names file and line), CPX_ERR_DATA. Threads: any thread. Since 0.1. */
CPX_API cpx_status cpx_series_read(const char* path, const char* options_json, cpx_series** out);
/* cpx_series_free: Releases a series; NULL is allowed. Series made from it (copies, surrogates) stay
 * valid. Threads: not while another call uses the same handle. Since 0.1. */
CPX_API void cpx_series_free(cpx_series* series);
/* cpx_series_shape: Frames and regions of a series; either output pointer may be NULL (not set).
 * Returns CPX_OK, CPX_ERR_ARGUMENT (NULL series). Threads: any thread; calls on different handles run in parallel, and calls that only read a handle may share it. Since 0.1. */
CPX_API cpx_status cpx_series_shape(const cpx_series* series, size_t* frames, size_t* regions);
/* cpx_series_copy: Copies the values into the caller's buffer (length >= frames * regions) in `layout`.
 * Ownership: the caller owns buffer. Returns CPX_OK, CPX_ERR_ARGUMENT (NULL series or
 * buffer, bad layout, buffer_length too short: nothing written).
 * Threads: any thread; calls on different handles run in parallel, and calls that only read a handle may share it. Since 0.1. */
CPX_API cpx_status cpx_series_copy(const cpx_series* series, double* buffer, size_t buffer_length,
                                   cpx_layout layout);
/* cpx_series_region_name: Name of region `index` (0-based). Ownership: *name is a new string for
 * cpx_string_free. Returns CPX_OK, CPX_ERR_ARGUMENT (NULL series or name, index out of
 * range). Threads: any thread; calls on different handles run in parallel, and calls that only read a handle may share it. Since 0.1. */
CPX_API cpx_status cpx_series_region_name(const cpx_series* series, size_t index, char** name);

/* ------------------------------------------------------------------------------------ */
/* Matrices: N x N connectivity, symmetric                                               */
/* ------------------------------------------------------------------------------------ */

typedef struct cpx_matrix cpx_matrix;

/* cpx_matrix_create: Makes an n x n matrix (n >= 2) from values given in `layout`, copying them; names
 * (borrowed, may be NULL: "R1", "R2", ...) has n entries.
 * Ownership: *out is a new matrix for cpx_matrix_free.
 * Returns CPX_OK, CPX_ERR_ARGUMENT (NULL data or out, n < 2, bad layout, a NULL name).
 * Threads: any thread. Since 0.1. */
CPX_API cpx_status cpx_matrix_create(const double* data, size_t n, cpx_layout layout,
                                     const char* const* names, cpx_matrix** out);
/* cpx_matrix_read: Reads a square matrix (TSV, CSV, whitespace text or NPY; with or without a header row
 * of names, and with or without a first column of names). Options: docs/options.md.
 * Ownership: path and options borrowed; *out is a new matrix for cpx_matrix_free.
 * Returns CPX_OK, CPX_ERR_ARGUMENT (NULL path or out, bad option), CPX_ERR_IO, CPX_ERR_PARSE,
 * CPX_ERR_DATA (not square, not symmetric). Threads: any thread. Since 0.1. */
CPX_API cpx_status cpx_matrix_read(const char* path, const char* options_json, cpx_matrix** out);
/* cpx_matrix_free: Releases a matrix; NULL is allowed.
 * Threads: not while another call uses the same handle. Since 0.1. */
CPX_API void cpx_matrix_free(cpx_matrix* matrix);
/* cpx_matrix_size: Number of nodes n of an n x n matrix.
 * Returns CPX_OK, CPX_ERR_ARGUMENT (NULL matrix or n). Threads: any thread; calls on different handles run in parallel, and calls that only read a handle may share it. Since 0.1. */
CPX_API cpx_status cpx_matrix_size(const cpx_matrix* matrix, size_t* n);
/* cpx_matrix_copy: Copies the n x n values into the caller's buffer (length >= n * n) in `layout`.
 * Returns CPX_OK, CPX_ERR_ARGUMENT (NULL matrix or buffer, bad layout, buffer_length too
 * short: nothing written). Threads: any thread; calls on different handles run in parallel, and calls that only read a handle may share it. Since 0.1. */
CPX_API cpx_status cpx_matrix_copy(const cpx_matrix* matrix, double* buffer, size_t buffer_length,
                                   cpx_layout layout);
/* cpx_matrix_name: Name of node `index` (0-based). Ownership: *name is a new string for
 * cpx_string_free. Returns CPX_OK, CPX_ERR_ARGUMENT (NULL matrix or name, index out of
 * range). Threads: any thread; calls on different handles run in parallel, and calls that only read a handle may share it. Since 0.1. */
CPX_API cpx_status cpx_matrix_name(const cpx_matrix* matrix, size_t index, char** name);
/* cpx_matrix_info: What the estimator reports beside the matrix (method, shrinkage intensity, frames
 * used, ...) as a JSON object. Ownership: *json is a new string for cpx_string_free.
 * Returns CPX_OK, CPX_ERR_ARGUMENT (NULL matrix or json). Threads: any thread; calls on different handles run in parallel, and calls that only read a handle may share it. Since 0.1. */
CPX_API cpx_status cpx_matrix_info(const cpx_matrix* matrix, char** json);
/* cpx_matrix_write: Writes the matrix to path atomically (a temporary file renamed into place; nothing is
 * left behind on failure). Options: {"format": "tsv"|"json"|"npy"} (default: from the
 * file extension, else tsv). Ownership: path and options borrowed.
 * Returns CPX_OK, CPX_ERR_ARGUMENT (NULL matrix or path, bad option), CPX_ERR_IO.
 * Threads: any thread; calls on different handles run in parallel, and calls that only read a handle may share it. Since 0.1. */
CPX_API cpx_status cpx_matrix_write(const cpx_matrix* matrix, const char* path, const char* options_json);

/* ------------------------------------------------------------------------------------ */
/* Connectivity: series -> matrix                                                        */
/* ------------------------------------------------------------------------------------ */

/* cpx_connect: Estimates connectivity: optional cleaning (confound regression, detrending, censoring,
 * standardising), optional band limiting, then the estimator. Options: docs/options.md,
 * "connect" ({"method", "fisher_z", "sampling_interval", "partial_basis", "clean",
 * "filter", "bands"}); files they name (confounds, frame mask) are read here. Several
 * bands are an error: use cpx_connect_bands. What the estimator reports is in
 * cpx_matrix_info. Ownership: *out is a new matrix for cpx_matrix_free.
 * Returns CPX_OK, CPX_ERR_ARGUMENT, CPX_ERR_IO, CPX_ERR_PARSE, CPX_ERR_DATA.
 * Threads: any thread; calls on different handles run in parallel, and calls that only read a handle may share it. Since 0.1. */
CPX_API cpx_status cpx_connect(const cpx_series* series, const char* options_json, cpx_matrix** out);

/* A set of matrices, one per band, in order of increasing low edge. */
typedef struct cpx_matrix_set cpx_matrix_set;
/* cpx_connect_bands: Like cpx_connect, but gives one matrix per named band of "bands" (a single matrix,
 * with band name "", when the options name no bands).
 * Ownership: *out is a new set for cpx_matrix_set_free.
 * Returns CPX_OK, CPX_ERR_ARGUMENT, CPX_ERR_IO, CPX_ERR_PARSE, CPX_ERR_DATA.
 * Threads: any thread; calls on different handles run in parallel, and calls that only read a handle may share it. Since 0.1. */
CPX_API cpx_status cpx_connect_bands(const cpx_series* series, const char* options_json, cpx_matrix_set** out);
/* cpx_matrix_set_free: Releases a set; NULL is allowed. Matrices taken out with cpx_matrix_set_get stay
 * valid. Threads: not while another call uses the same handle. Since 0.1. */
CPX_API void cpx_matrix_set_free(cpx_matrix_set* set);
/* cpx_matrix_set_count: Number of matrices in the set.
 * Returns CPX_OK, CPX_ERR_ARGUMENT (NULL set or count). Threads: any thread; calls on different handles run in parallel, and calls that only read a handle may share it. Since 0.1. */
CPX_API cpx_status cpx_matrix_set_count(const cpx_matrix_set* set, size_t* count);
/* cpx_matrix_set_band: Band name of matrix `index` ("" for an unnamed band). Ownership: *name is a new
 * string for cpx_string_free. Returns CPX_OK, CPX_ERR_ARGUMENT (NULL set or name, index
 * out of range). Threads: any thread; calls on different handles run in parallel, and calls that only read a handle may share it. Since 0.1. */
CPX_API cpx_status cpx_matrix_set_band(const cpx_matrix_set* set, size_t index, char** name);
/* cpx_matrix_set_get: A new matrix handle (a copy) for entry `index`. Ownership: *out is the caller's, for
 * cpx_matrix_free; it stays valid after the set is freed.
 * Returns CPX_OK, CPX_ERR_ARGUMENT (NULL set or out, index out of range).
 * Threads: any thread; calls on different handles run in parallel, and calls that only read a handle may share it. Since 0.1. */
CPX_API cpx_status cpx_matrix_set_get(const cpx_matrix_set* set, size_t index, cpx_matrix** out);

/* Regional time series from an image file.
 *   - NIfTI-1 or NIfTI-2 4-D image (.nii, .nii.gz) + a 3-D integer label image on the same
 *     grid (labels_path): one region per label > 0, in increasing label order, the mean over
 *     its voxels; names from "label_names", else "label-<k>".
 *   - CIFTI-2 dense series (.dtseries.nii) + a CIFTI dense label file (labels_path: a
 *     .dlabel.nii, or a dense file of integer labels such as a .dscalar.nii): each
 *     brainordinate (surface vertex or voxel) takes the label the file gives the same vertex
 *     or voxel; one region per label > 0, named from the file's label table (or
 *     "label_names", else "label-<k>").
 *   - CIFTI-2 parcellated series (.ptseries.nii) with labels_path NULL (or ""): the parcels
 *     are the regions, in file order, with their names.
 * Labels must be whole numbers from 0 to 2^53 (0 is background). The sampling interval
 * comes from pixdim[4] in its time unit (NIfTI) or SeriesStep x 10^SeriesExponent when
 * SeriesUnit is SECOND (CIFTI), unless given.
 * Options (JSON object, NULL for none):
 *   "label_names": TSV of label index and name (NIfTI and CIFTI dense label files);
 *   "sampling_interval": seconds, > 0;
 *   "label_map": which map of a CIFTI label file with several maps, by name or by number
 *     from 1 (default: the only map);
 *   "memory_budget_mb": integer 1..1048576, default 1024: the most the reader may hold
 *     (label tables, the CIFTI header, the regional series); every size a header declares
 *     is checked against it and against the file's real size before anything is allocated.
 * image_path (borrowed, not NULL), labels_path (borrowed, may be NULL), out (on success a
 * new series for cpx_series_free; NULL on failure).
 * Status: CPX_ERR_ARGUMENT (NULL image_path or out, bad option, a label file missing or
 * given where it does not apply), CPX_ERR_IO (cannot open or read), CPX_ERR_PARSE (not a
 * supported image, header sizes that do not fit the file, malformed CIFTI XML: the message
 * names the file and the field or element), CPX_ERR_DATA (unsupported datatype, grids or
 * brainordinates that differ, labels that are not whole numbers, labels without voxels or
 * missing from the table), CPX_ERR_BUDGET (past "memory_budget_mb"), CPX_ERR_MEMORY.
 * Thread safety: independent calls may run in parallel. Since 0.1 (NIfTI-2, CIFTI-2,
 * labels_path NULL and the options "label_map", "memory_budget_mb": since 0.2). */
CPX_API cpx_status cpx_series_read_image(const char* image_path, const char* labels_path, const char* options_json,
                                         cpx_series** out);
/* cpx_series_clean: The series the correlation estimators of cpx_connect would see: cleaned, band-limited
 * (at most one band), censored frames dropped, standardised if asked. Options: the
 * "clean", "filter", "bands" (one band) and "sampling_interval" keys of the connect options.
 * Ownership: *out is a new series for cpx_series_free.
 * Returns CPX_OK, CPX_ERR_ARGUMENT, CPX_ERR_IO, CPX_ERR_PARSE, CPX_ERR_DATA.
 * Threads: any thread; calls on different handles run in parallel, and calls that only read a handle may share it. Since 0.1. */
CPX_API cpx_status cpx_series_clean(const cpx_series* series, const char* options_json, cpx_series** out);
/* cpx_series_sampling_interval: Sampling interval of a series in seconds (NaN when unknown, e.g. read from TSV).
 * Returns CPX_OK, CPX_ERR_ARGUMENT (NULL series or seconds).
 * Threads: any thread; calls on different handles run in parallel, and calls that only read a handle may share it. Since 0.1. */
CPX_API cpx_status cpx_series_sampling_interval(const cpx_series* series, double* seconds);

/* ------------------------------------------------------------------------------------ */
/* Sweep: matrix -> filtration -> curves (cliques, chi, Betti, curvature, transitions)   */
/* ------------------------------------------------------------------------------------ */

typedef struct cpx_sweep cpx_sweep;

/* cpx_sweep_run: Runs the density filtration of `matrix` and every engine the options ask for. Options
 * (docs/options.md, "sweep"): {"weights", "max_density", "grid", "cliques", "homology",
 * "curvature", "transitions"}. progress (may be NULL) is called on the calling thread with
 * `user`; non-zero cancels. Ownership: *out is a new sweep for cpx_sweep_free.
 * Returns CPX_OK, CPX_ERR_ARGUMENT (NULL matrix or out, bad option), CPX_ERR_DATA,
 * CPX_ERR_BUDGET, CPX_ERR_CANCELLED, CPX_ERR_OVERFLOW. Threads: any thread; starts its own
 * worker threads ("threads" options). Since 0.1. */
CPX_API cpx_status cpx_sweep_run(const cpx_matrix* matrix, const char* options_json, cpx_progress_fn progress,
                                 void* user, cpx_sweep** out);
/* cpx_sweep_free: Releases a sweep; NULL is allowed.
 * Threads: not while another call uses the same handle. Since 0.1. */
CPX_API void cpx_sweep_free(cpx_sweep* sweep);
/* cpx_sweep_json: The whole result as one JSON document (exact counts as decimal strings; missing
 * values null). Ownership: *json is a new string for cpx_string_free.
 * Returns CPX_OK, CPX_ERR_ARGUMENT (NULL sweep or json). Threads: any thread; calls on different handles run in parallel, and calls that only read a handle may share it. Since 0.1. */
CPX_API cpx_status cpx_sweep_json(const cpx_sweep* sweep, char** json);
/* cpx_sweep_curves_tsv: The curves on the grid as TSV text, one column per curve (header row first; missing
 * values n/a). Ownership: *tsv is a new string for cpx_string_free.
 * Returns CPX_OK, CPX_ERR_ARGUMENT (NULL sweep or tsv). Threads: any thread; calls on different handles run in parallel, and calls that only read a handle may share it. Since 0.1. */
CPX_API cpx_status cpx_sweep_curves_tsv(const cpx_sweep* sweep, char** tsv);
/* cpx_sweep_shape: Number of grid points and number of curve columns; either pointer may be NULL.
 * Returns CPX_OK, CPX_ERR_ARGUMENT (NULL sweep). Threads: any thread; calls on different handles run in parallel, and calls that only read a handle may share it. Since 0.1. */
CPX_API cpx_status cpx_sweep_shape(const cpx_sweep* sweep, size_t* points, size_t* columns);
/* cpx_sweep_column_name: Name of curve column `index` ("density", "chi", "cliques_2", "betti_1", ...).
 * Ownership: *name is a new string for cpx_string_free. Returns CPX_OK, CPX_ERR_ARGUMENT
 * (NULL sweep or name, index out of range). Threads: any thread; calls on different handles run in parallel, and calls that only read a handle may share it. Since 0.1. */
CPX_API cpx_status cpx_sweep_column_name(const cpx_sweep* sweep, size_t index, char** name);
/* cpx_sweep_curve: Copies the curve named `column` as doubles into the caller's buffer (one per grid
 * point; exact integers beyond 2^53 are rounded here, use cpx_sweep_json for exact values).
 * Returns CPX_OK, CPX_ERR_ARGUMENT (NULL argument, unknown column: the message lists the
 * known ones, buffer_length too short: nothing written). Threads: any thread; calls on different handles run in parallel, and calls that only read a handle may share it. Since 0.1. */
CPX_API cpx_status cpx_sweep_curve(const cpx_sweep* sweep, const char* column, double* buffer, size_t buffer_length);

/* ------------------------------------------------------------------------------------ */
/* Group statistics, surrogates and rewiring (owner: cohort/simulate stages)             */
/* ------------------------------------------------------------------------------------ */
/* Results come back as JSON text (release with cpx_string_free). Options are JSON (docs/options.md,
 * "stats.*", "surrogate", "rewire"); every random choice comes from "seed", so a result
 * is the same for a given seed. Research software: no clinical decisions. */

/* cpx_stats_permutation_test: Permutation test of a difference between group a (n_a values) and group b (n_b values).
 * Options: {"statistic": "mean_difference"|"welch_t"|"student_t", "alternative":
 * "two_sided"|"less"|"greater", "exact_limit": 20000, "resamples": 9999, "seed": 1}: every
 * relabelling when there are at most exact_limit, else "resamples" seeded ones. Result:
 * {"statistic", "p_value", "exact", "null_size", "n_a", "n_b", "mean_a", "mean_b",
 * "cohen_d", "hedges_g", "hedges_correction", ...}. Ownership: inputs borrowed; *result_json is a new string for cpx_string_free.
 * Returns CPX_OK, CPX_ERR_ARGUMENT, CPX_ERR_DATA. Threads: any thread. Since 0.1. */
CPX_API cpx_status cpx_stats_permutation_test(const double* a, size_t n_a, const double* b, size_t n_b,
                                              const char* options_json, char** result_json);
/* cpx_stats_bootstrap_band: Percentile bootstrap band of the mean curve of subjects x points values (resampling
 * subjects). Options: {"confidence": 0.95, "resamples": 9999, "seed": 1}.
 * Result: {"mean": [...], "lower": [...], "upper": [...]}. Ownership: inputs borrowed; *result_json is a new string for cpx_string_free.
 * Returns CPX_OK, CPX_ERR_ARGUMENT, CPX_ERR_DATA. Threads: any thread. Since 0.1. */
CPX_API cpx_status cpx_stats_bootstrap_band(const double* curves, size_t subjects, size_t points, cpx_layout layout,
                                            const char* options_json, char** result_json);
/* cpx_stats_cluster_test: Cluster-based permutation test of two groups of curves (n_a x points and n_b x points,
 * same layout). Options: {"statistic": "student_t"|"welch_t", "threshold" (default the
 * two-sided 5% Student t quantile), "exact_limit", "resamples", "seed"}. Result: {"t",
 * "threshold", "clusters": [{"first", "last", "sign", "mass", "p_value"}], "exact",
 * "null_size"}. Ownership: inputs borrowed; *result_json is a new string for cpx_string_free.
 * Returns CPX_OK, CPX_ERR_ARGUMENT, CPX_ERR_DATA. Threads: any thread. Since 0.1. */
CPX_API cpx_status cpx_stats_cluster_test(const double* a, size_t n_a, const double* b, size_t n_b, size_t points,
                                          cpx_layout layout, const char* options_json, char** result_json);
/* cpx_stats_fdr: Benjamini-Hochberg adjusted p-values, in the input order, into the caller's
 * adjusted[0..n). Returns CPX_OK, CPX_ERR_ARGUMENT (NULL pointer, adjusted_length < n),
 * CPX_ERR_DATA (a p-value outside [0, 1]). Threads: any thread. Since 0.1. */
CPX_API cpx_status cpx_stats_fdr(const double* p_values, size_t n, double* adjusted, size_t adjusted_length);
/* cpx_stats_residualise: Residuals of values (one per subject) after least squares on an intercept and the
 * subjects x columns covariates (in `layout`), into the caller's residuals.
 * Returns CPX_OK, CPX_ERR_ARGUMENT (NULL pointer, bad layout, residuals_length <
 * subjects), CPX_ERR_DATA. Threads: any thread. Since 0.1. */
CPX_API cpx_status cpx_stats_residualise(const double* values, size_t subjects, const double* covariates,
                                         size_t columns, cpx_layout layout, double* residuals,
                                         size_t residuals_length);
/* cpx_stats_compare_summaries: Permutation tests of several per-subject summaries at once, Benjamini-Hochberg across
 * them. input_json: {"summaries": [{"name", "a", "b"}], "covariates": [{"name", "a", "b"}]}
 * (covariates optional: summaries are replaced by their residuals on them; null marks a
 * missing value). Options as cpx_stats_permutation_test. Result: {"tests": [{"summary",
 * "statistic", "p_value", "p_adjusted", "hedges_g", "missing_a", "missing_b", ...}]}.
 * Ownership: inputs borrowed; *result_json is a new string for cpx_string_free. Returns CPX_OK, CPX_ERR_ARGUMENT, CPX_ERR_DATA.
 * Threads: any thread. Since 0.1. */
CPX_API cpx_status cpx_stats_compare_summaries(const char* input_json, const char* options_json, char** result_json);
/* cpx_stats_t_quantile: Quantile of Student's t distribution: P(T <= *quantile) = probability.
 * Returns CPX_OK, CPX_ERR_ARGUMENT (NULL quantile, probability outside (0, 1),
 * degrees_of_freedom <= 0). Threads: any thread. Since 0.1. */
CPX_API cpx_status cpx_stats_t_quantile(double probability, double degrees_of_freedom, double* quantile);
/* A study design tested per measure by permutation of a linear model (since 0.3).
 * data_json: {"subject": [...], "session": [...], "group": [...], "columns": {"age": [...],
 * "site": [...]}, "measures": [{"name", "values": [...]}]} (one entry per subject and
 * session; session, group and columns optional; null marks a missing value).
 * design_json: {"design": "two_groups"|"paired"|"groups"|"regression"|"mixed", "within": "session",
 * "between": "group", "levels": [...], "score": column, "covariates": [columns], "blocks":
 * column, "permutations": 9999, "seed": 1, "confidence": 0.95, "record_permutations": false}.
 * paired: sign flips of the per-subject differences (all 2^n when 2^n <= permutations);
 * two_groups (t), groups (F), regression (t of the slope, Pearson and Spearman r): rows
 * permuted within blocks (all of them when few enough); mixed: three rows per measure
 * (term "within": sign flips of the differences; "between", "interaction": whole subjects
 * permuted). Covariates by Freedman-Lane. Optional "curves" (with "density" in the data):
 * cluster-mass tests along the density axis ("curve_tests").
 * Result: {"design", "levels", "tests": [{"measure", "term", "statistic", "value", "df1", "df2",
 * "p_value", "p_adjusted", "p_parametric", "exact", "null_size", "estimate",
 * "estimate_interval", "effect", "effect_value", "effect_interval", "spearman_rho",
 * "spearman_p", ...}], "permutations_used" (with record_permutations)}. Errors name the
 * key or the missing column. Ownership: *result_json is a new string for cpx_string_free.
 * Returns CPX_OK, CPX_ERR_ARGUMENT, CPX_ERR_DATA. Threads: any thread. Since 0.3. */
CPX_API cpx_status cpx_stats_design_test(const char* data_json, const char* design_json, char** result_json);

/* cpx_surrogate: A surrogate of `series` (same shape, names and sampling interval). Options:
 * {"method": "phase_multivariate"|"phase_independent"|"iaaft", "seed": 1,
 * "iaaft_iterations": 100}. Every method keeps each region's amplitude spectrum;
 * phase_multivariate also keeps the correlation matrix, the others destroy coupling;
 * iaaft also keeps each region's sorted values exactly. Ownership: *out is a new series
 * for cpx_series_free. Returns CPX_OK, CPX_ERR_ARGUMENT, CPX_ERR_DATA.
 * Threads: any thread; calls on different handles run in parallel, and calls that only read a handle may share it. Since 0.1. */
CPX_API cpx_status cpx_surrogate(const cpx_series* series, const char* options_json, cpx_series** out);
/* cpx_rewire_edges: Degree-preserving rewiring (Maslov-Sneppen) of a simple graph on `nodes` nodes given as
 * edge_count pairs (u, v) in edges[0 .. 2*edge_count). Writes the rewired pairs (u < v,
 * sorted) into the caller's rewired (length >= 2*edge_count). Options:
 * {"swaps_per_edge": 10, "seed": 1}. Returns CPX_OK, CPX_ERR_ARGUMENT (NULL pointer, short
 * rewired, a node out of range, a loop or repeated edge). Threads: any thread. Since 0.1. */
CPX_API cpx_status cpx_rewire_edges(size_t nodes, const uint32_t* edges, size_t edge_count, const char* options_json,
                                    uint32_t* rewired, size_t rewired_length);
/* cpx_simulate_plan: The demo cohort's model (docs/demo-study.md; invented data): the plan as JSON
 * {"model", "subjects": [{"subject", "group", "seed", "global_strength", "age"}], "module",
 * "base_loading", "region_names"}. Ownership: *plan_json is a new string for
 * cpx_string_free. Returns CPX_OK, CPX_ERR_ARGUMENT (NULL plan_json, bad option).
 * Threads: any thread. Since 0.1. */
CPX_API cpx_status cpx_simulate_plan(const char* options_json, char** plan_json);
/* cpx_simulate_subject: The time series of subject `index` (0-based, in plan order) of the same model.
 * Ownership: *out is a new series for cpx_series_free. Returns CPX_OK, CPX_ERR_ARGUMENT
 * (NULL out, bad option, index out of range). Threads: any thread. Since 0.1. */
CPX_API cpx_status cpx_simulate_subject(const char* options_json, size_t index, cpx_series** out);
/* (end of the group statistics section) */

/* ------------------------------------------------------------------------------------ */
/* Whole subjects and cohorts (owner: pipeline stage)                                    */
/* ------------------------------------------------------------------------------------ */

/* cpx_subject_run: Runs one subject from a JSON config (docs/options.md, "subject": id, timeseries or
 * image + labels, connect, sweep, null, ...) and returns the subject document as JSON.
 * When out_dir is not NULL the document and its TSV twins are also written there
 * (atomically; the folder must exist). Relative paths are taken from the current directory.
 * Ownership: inputs borrowed; *document_json is a new string for cpx_string_free.
 * Returns CPX_OK, CPX_ERR_ARGUMENT, CPX_ERR_IO, CPX_ERR_PARSE, CPX_ERR_DATA, CPX_ERR_BUDGET,
 * CPX_ERR_CANCELLED, CPX_ERR_OVERFLOW. Threads: any thread; progress (may be NULL) runs on
 * the calling thread. Since 0.1. */
CPX_API cpx_status cpx_subject_run(const char* config_json, const char* out_dir, cpx_progress_fn progress, void* user,
                                   char** document_json);

/* cpx_cohort_run: Runs every subject of a manifest TSV (subject, group, timeseries, optional confounds
 * and covariates) with a shared config into out_dir (created if missing). Finished subjects
 * whose inputs and options are unchanged are skipped; a failing subject is recorded with
 * its reason and the others go on. Options: {"workers": 0 (one per core), "force": false}.
 * Ownership: *summary_json ({"done", "skipped", "failed", "subjects"}) is a new string for
 * cpx_string_free. Returns CPX_OK, CPX_ERR_ARGUMENT, CPX_ERR_IO, CPX_ERR_PARSE (bad
 * manifest or config), CPX_ERR_CANCELLED. Threads: starts `workers` threads; progress runs
 * on the calling thread; two runs must not share out_dir. Since 0.1. */
CPX_API cpx_status cpx_cohort_run(const char* manifest_path, const char* config_json, const char* out_dir,
                                  const char* options_json, cpx_progress_fn progress, void* user, char** summary_json);

/* --- homology: persistence bars of a sweep (owner: homology engine) ------------------ */
/* A sweep run with a "homology" section (docs/outputs.md, "homology") holds the
 * bars of its flag filtration over Z/2; its curves include betti_0..betti_K. */
#define CPX_BAR_COLUMNS 7
/* cpx_sweep_bars: Bars of one dimension (or of every dimension when `dimension` is -1), two calls: with
 * buffer NULL only *bars is set; then a (*bars) x CPX_BAR_COLUMNS table in `layout`:
 * dimension, birth rank, death rank, birth density, death density, birth threshold, death
 * threshold. Ranks count edges entered; an essential bar has death rank and density INFINITY
 * and death threshold NaN; a bar born at rank 0 has birth threshold NaN. *bars is set even
 * when the buffer is too short. Returns CPX_OK, CPX_ERR_ARGUMENT (NULL sweep or bars, bad
 * layout or dimension, short buffer, sweep run without "homology"). Threads: any thread; calls on different handles run in parallel, and calls that only read a handle may share it. Since 0.1. */
CPX_API cpx_status cpx_sweep_bars(const cpx_sweep* sweep, int dimension, cpx_layout layout, double* buffer,
                                  size_t buffer_length, size_t* bars);

/* cpx_cohort_compare: Group comparison of the finished subjects in dir (a cohort run's folder): group mean
 * curves with bootstrap bands, permutation tests of per-subject summaries with Hedges g
 * and Benjamini-Hochberg, cluster permutation tests along the density axis, null baselines.
 * Writes dir/group_comparison.json and dir/group_tests.tsv. Options: docs/options.md,
 * "compare" ({"band", "groups", "statistic", "exact_limit", "resamples", "seed",
 * "confidence", "covariates", "cluster_curves", "primary"}); "primary" lists the headline
 * summaries, first in the table and with their permutation null kept. The comparison also
 * carries Hedges g intervals, the resamples drawn, the test family, warnings and the
 * provenance (config given and resolved, versions, checksums, per-subject quality).
 * Ownership: *comparison_json is a new string for cpx_string_free.
 * Returns CPX_OK, CPX_ERR_ARGUMENT, CPX_ERR_IO, CPX_ERR_PARSE, CPX_ERR_DATA.
 * Threads: any thread; two calls must not share dir. Since 0.1. */
CPX_API cpx_status cpx_cohort_compare(const char* dir, const char* options_json, char** comparison_json);

/* cpx_cohort_report: Writes the self-contained HTML report of dir/group_comparison.json to dir/report.html
 * (or options {"out": path}) atomically; options {"created": text shown as the creation
 * date}. Also writes methods.md (the methods paragraph with its references) beside the
 * report. Ownership: *report_path (the file written) is a new string for cpx_string_free.
 * Returns CPX_OK, CPX_ERR_ARGUMENT, CPX_ERR_IO, CPX_ERR_PARSE (the comparison is not valid).
 * Threads: any thread. Since 0.1. */
CPX_API cpx_status cpx_cohort_report(const char* dir, const char* options_json, char** report_path);

/* cpx_simulate_study: Writes a simulated study (invented data: time series, manifest.tsv, cohort_config.json,
 * model.json) into dir; options as cpx_simulate_plan plus "config" (the subject config to
 * write), and since 0.2 "layout": "tsv" (default) or "bids" (a BIDS dataset with NIfTI-1
 * runs and an atlas under derivatives/critplex-simulate/, written to a temporary sibling
 * and renamed; "sessions" 0-99, "block" 1-8). Ownership: *summary_json is a new string for
 * cpx_string_free. Returns CPX_OK, CPX_ERR_ARGUMENT, CPX_ERR_IO.
 * Threads: any thread; two calls must not share dir. Since 0.1. */
CPX_API cpx_status cpx_simulate_study(const char* options_json, const char* dir, char** summary_json);

/* cpx_dataset_run: dataset mode, a preprocessed BIDS derivatives folder in, a BIDS derivatives
 * dataset out. level "participant": every sub-<l>/[ses-<l>/]func/..._desc-preproc_bold run
 * (.nii, .nii.gz, .dtseries.nii, .ptseries.nii) passing the filter goes through the subject
 * pipeline with RepetitionTime from its JSON sidecar (the sidecar wins over the header; a
 * disagreement is listed in "warnings") and, when the config selects confound columns,
 * its *_desc-confounds_timeseries.tsv. Writes out_dir/dataset_description.json and per run
 * out_dir/sub-<l>/[ses-<l>/]func/<run entities>_atlas-<a>_desc-<band>_{connectivity,curves,
 * transitions}.tsv each with a .json sidecar, and <run entities>_atlas-<a>_topology.json.
 * Options: {"atlas", "atlas_labels", "atlas_label", "participant_label": [...], "session":
 * [...], "task", "space", "config": {shared subject config}, "dry_run": false, "force": false}.
 * Missing sidecars or confounds tables fail the call before anything is written; a run that
 * fails later is listed with its reason and the others go on. level "group": reads the
 * finished runs in out_dir and writes out_dir/group/curves_long.tsv and summaries.tsv (with
 * sidecars), plus group_comparison.json and group_tests.tsv when participants.tsv has a
 * group column (one run per participant: with several sessions, "compare_session" picks
 * one); options {"compare": {compare options}, "compare_session": ""}. summary_json (free
 * with cpx_string_free): {"level", "runs", "done", "skipped", "failed", "warnings", ...};
 * NULL on failure. progress may be NULL. Returns CPX_OK, CPX_ERR_ARGUMENT, CPX_ERR_IO,
 * CPX_ERR_PARSE, CPX_ERR_DATA, CPX_ERR_CANCELLED. Threads: independent calls on different
 * folders are safe in parallel. Since 0.3. */
CPX_API cpx_status cpx_dataset_run(const char* derivatives_dir, const char* out_dir, const char* level,
                                   const char* options_json, cpx_progress_fn progress, void* user, char** summary_json);

/* --- stage sections below are added by the stages that own them ----------------------- */

/* ------------------------------------------------------------------------------------ */
/* Curvature and transitions                                                             */
/* ------------------------------------------------------------------------------------ */

/* cpx_sweep_node_curvature: Node curvature curves of a sweep run with a "curvature" section: a points x nodes
 * matrix (kappa_i at each grid point; NaN where the clique engine stopped early) in
 * `layout`. Two calls: with buffer NULL only *points and *nodes are set; then a buffer of
 * at least points * nodes doubles (points and nodes may be NULL on the second call).
 * Returns CPX_OK, CPX_ERR_ARGUMENT (NULL sweep, bad layout, no curvature, short buffer).
 * Threads: any thread; calls on different handles run in parallel, and calls that only read a handle may share it. Since 0.1. */
CPX_API cpx_status cpx_sweep_node_curvature(const cpx_sweep* sweep, cpx_layout layout, double* buffer,
                                            size_t buffer_length, size_t* points, size_t* nodes);
/* cpx_sweep_transitions_tsv: The transitions summary record of a sweep as TSV (header row first; one row per chi
 * zero, chi touch, Betti crossing, Betti peak and random-graph zero; docs/outputs.md).
 * Ownership: *tsv is a new string for cpx_string_free.
 * Returns CPX_OK, CPX_ERR_ARGUMENT (NULL sweep or tsv). Threads: any thread; calls on different handles run in parallel, and calls that only read a handle may share it. Since 0.1. */
CPX_API cpx_status cpx_sweep_transitions_tsv(const cpx_sweep* sweep, char** tsv);
/* cpx_transitions_from_curves: Transitions of curves computed elsewhere. density: `points` non-decreasing values;
 * chi: `points` values or NULL; betti: points x dimensions values in `layout`, or NULL
 * (dimensions 0); NaN marks unknown values. nodes: N for the Erdos-Renyi reference (0:
 * none). Options: the "transitions" section of the sweep options. Ownership: inputs
 * borrowed; *json (the "transitions" object of the sweep JSON) is a new string for
 * cpx_string_free. Returns CPX_OK, CPX_ERR_ARGUMENT, CPX_ERR_DATA.
 * Threads: any thread. Since 0.1. */
CPX_API cpx_status cpx_transitions_from_curves(const double* density, const double* chi, size_t points,
                                               const double* betti, size_t dimensions, cpx_layout layout,
                                               size_t nodes, const char* options_json, char** json);
/* cpx_random_graph_expectations: Erdos-Renyi G(N, p) closed forms: E[chi] and E[kappa] at each of `count` values of p
 * in [0, 1], in paired binary128 arithmetic (about 67 digits) with an error estimate, and,
 * unless {"zeros": false}, their zeros in (0, max_p]. Options: {"zeros": true, "max_p": 1,
 * "scan_points": 2000}. *json: {"nodes", "arithmetic", "values": [{"p", "chi",
 * "chi_decimal", "chi_relative_error_bound", "chi_reliable", "kappa", ...}], "zeros"}, a new
 * string for cpx_string_free. Returns CPX_OK, CPX_ERR_ARGUMENT (nodes < 1, NULL p with
 * count > 0, p outside [0, 1], bad option). Threads: any thread. Since 0.1. */
CPX_API cpx_status cpx_random_graph_expectations(size_t nodes, const double* p, size_t count,
                                                 const char* options_json, char** json);

#ifdef __cplusplus
} /* extern "C" */
#endif

#endif /* CRITPLEX_H */
