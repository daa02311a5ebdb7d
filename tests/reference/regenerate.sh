#!/usr/bin/env bash
# Rebuild every reference fixture under tests/fixtures/ from its committed script.
# (io_check_written.py and io_check_dtypes.py are not generators: the round-trip tests run them
# on files embloom wrote.)
set -euo pipefail
cd "$(dirname "$0")"
for script in io_make_fixtures.py pca_iris.py principal_noise_cov.py calibrated_stats.py probe_digits.py probe_reweight.py probe_centroid.py \
              borderline_adaptive.py \
              eval_metrics.py eval_stats.py eval_prdc.py eval_interval.py knn_ties.py probe_knn_standardize.py \
              io_make_dtypes.py; do
    echo "reference: $script"
    python3 "$script"
done
