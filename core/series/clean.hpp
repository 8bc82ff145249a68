// Cleaning of regional time series before band limiting and estimation: confound
// regression, polynomial detrending, censoring of frames, standardisation.
//
// Order (each step optional): regress out the confounds and the polynomial trend in one
// least-squares fit (intercept always included) -> [band limiting, filter.hpp] -> drop
// censored frames -> standardise. The fit uses only the frames that are kept, so a
// censored spike cannot pull the coefficients; residuals are formed for every frame
// because a filter needs a regularly sampled series.
#pragma once

#include <Eigen/Dense>

#include <string>
#include <vector>

namespace critplex::series {

// What the user asked for ("clean" section of the connect options). Paths are read by io
// (io/confounds.hpp), never by this stage.
struct CleanOptions {
  std::string regressor_table;                 // confounds TSV ("" = none)
  std::vector<std::string> regressor_columns;  // exact names or patterns with * and ?
  std::string regressor_missing = "zero";      // what n/a becomes: zero, column_mean, error
  int trend_order = -1;                        // -1 none, 0 mean, 1 linear, ... 5
  bool unit_variance = false;                  // standardise after cleaning
  std::string motion_column;                   // censor frames whose value exceeds motion_limit
  double motion_limit = 0.5;                   // mm (Power et al. 2012's threshold)
  std::string frame_mask;                      // file of 0/1 per frame ("" = none)
  long long min_frames = 10;                   // fewest frames censoring may leave
};

// The loaded inputs of cleaning.
struct CleanInputs {
  Eigen::MatrixXd confounds;            // T x K (K may be 0)
  std::vector<std::string> confound_names;
  Eigen::VectorXd motion;               // T or empty
  Eigen::VectorXd mask;                 // T or empty
};

// Least-squares residuals of each column of `values` (T x N) on [1, confounds, t, t^2, ...]
// up to `trend_order` (-1: no trend terms; 0 adds nothing beyond the intercept). The fit
// uses the frames with keep[t] true (all frames when keep is empty). Errors when the
// design has no more kept frames than columns or is rank deficient.
Eigen::MatrixXd regress_out(const Eigen::MatrixXd& values, const Eigen::MatrixXd& confounds, int trend_order,
                            const std::vector<bool>& keep);

// The same fit set up once for series of `frames` frames: the design and its QR
// factorisation, reused for every series given to residuals() (null surrogates of one
// subject). regress_out(v, ...) is Regression(v.rows(), ...).residuals(v), bit for bit.
class Regression {
 public:
  Regression(Eigen::Index frames, const Eigen::MatrixXd& confounds, int trend_order, const std::vector<bool>& keep);
  Eigen::MatrixXd residuals(const Eigen::MatrixXd& values) const;  // values: frames x N

 private:
  Eigen::MatrixXd design_;      // frames x p
  Eigen::MatrixXd q_;           // thin Q of the kept rows' design
  Eigen::MatrixXd r_;           // p x p upper triangle
  Eigen::PermutationMatrix<Eigen::Dynamic, Eigen::Dynamic> columns_;
  std::vector<bool> keep_;
};

// Frames to keep: motion[t] > limit is censored (NaN motion counts as 0, the first frame
// of a framewise-displacement column being undefined), then a mask (1 keep, 0 drop) if
// given. Errors when fewer than min_frames remain. Empty inputs mean "keep everything".
std::vector<bool> frames_to_keep(Eigen::Index frames, const Eigen::VectorXd& motion, double limit,
                                 const Eigen::VectorXd& mask, Eigen::Index min_frames);

// Rows with keep[t] true.
Eigen::MatrixXd keep_rows(const Eigen::MatrixXd& values, const std::vector<bool>& keep);

// Each column to zero mean and unit standard deviation (n - 1 denominator). A column with
// zero variance is an error naming the region.
Eigen::MatrixXd standardise(const Eigen::MatrixXd& values, const std::vector<std::string>& names);

}  // namespace critplex::series
