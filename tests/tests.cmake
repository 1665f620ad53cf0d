# Integration and reference tests: the tinct binary end to end, and checks against
# references outside the project. Reference scripts run Debian's /usr/bin/python3,
# which sees Debian's numpy, scikit-learn, SciPy, scikit-image and GDAL bindings.
set(TINCT_TEST_DATA ${CMAKE_BINARY_DIR}/testdata)
set(DEBIAN_PYTHON /usr/bin/python3)

# The real Landsat 7 ETM+ subset shipped in Debian's r-cran-stars (no R needed).
add_test(NAME fetch_debian_test_data
         COMMAND bash ${CMAKE_SOURCE_DIR}/tests/fetch_debian_test_data.sh ${TINCT_TEST_DATA})
set_tests_properties(fetch_debian_test_data PROPERTIES FIXTURES_SETUP debian_data)

function(tinct_script_test name)
  add_test(NAME ${name} COMMAND ${ARGN})
  set_tests_properties(${name} PROPERTIES
    ENVIRONMENT "TINCT=$<TARGET_FILE:tinct>;TINCT_TEST_DATA=${TINCT_TEST_DATA};TINCT_CONFIG_DIR=${CMAKE_SOURCE_DIR}/configs;TINCT_SOURCE=${CMAKE_SOURCE_DIR}")
endfunction()

tinct_script_test(cli_exit_codes bash ${CMAKE_SOURCE_DIR}/tests/integration/cli_exit_codes.sh)
tinct_script_test(cli_two_binaries bash ${CMAKE_SOURCE_DIR}/tests/integration/cli_two_binaries.sh)
tinct_script_test(check_configs bash ${CMAKE_SOURCE_DIR}/tests/integration/check_configs.sh)

tinct_script_test(reference_survey_vs_gdalinfo
  ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/reference/survey_vs_gdalinfo.py)
set_tests_properties(reference_survey_vs_gdalinfo PROPERTIES FIXTURES_REQUIRED debian_data)

# Colour module against scikit-image and numpy: the script writes the reference CSVs
# (fixture colour_reference), tinct_reference_tests reads them.
add_test(NAME make_colour_reference
         COMMAND ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/reference/make_colour_reference.py)
set_tests_properties(make_colour_reference PROPERTIES
  FIXTURES_SETUP colour_reference ENVIRONMENT "TINCT_TEST_DATA=${TINCT_TEST_DATA}")

# Classification metrics against scikit-learn and numpy the same way (fixture metrics_reference).
add_test(NAME make_metrics_reference
         COMMAND ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/reference/make_metrics_reference.py)
set_tests_properties(make_metrics_reference PROPERTIES
  FIXTURES_SETUP metrics_reference ENVIRONMENT "TINCT_TEST_DATA=${TINCT_TEST_DATA}")

add_executable(tinct_reference_tests tests/reference/test_colour_reference.cpp
                                     tests/reference/test_metrics_reference.cpp)
target_link_libraries(tinct_reference_tests PRIVATE tinct_data tinct_assess tinct_catch_main)
# Two fixtures: catch_discover_tests (Catch2 2.13) unescapes PROPERTIES three times on the way
# to CTest, so the list's ';' needs eight backslashes (check: ctest --show-only=json-v1).
catch_discover_tests(tinct_reference_tests PROPERTIES
  FIXTURES_REQUIRED "colour_reference\\\\\\\\;metrics_reference"
  ENVIRONMENT "TINCT_TEST_DATA=${TINCT_TEST_DATA}")

# Paired statistics, temperature scaling and area of applicability against SciPy, statsmodels
# and numpy the same way: one script per idea writes its CSVs (one fixture each),
# tinct_assess_reference_tests reads them.
foreach(reference paired_statistics temperature applicability)
  add_test(NAME make_${reference}_reference
           COMMAND ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/reference/make_${reference}_reference.py)
  set_tests_properties(make_${reference}_reference PROPERTIES
    FIXTURES_SETUP ${reference}_reference ENVIRONMENT "TINCT_TEST_DATA=${TINCT_TEST_DATA}")
endforeach()
add_executable(tinct_assess_reference_tests
  tests/reference/test_applicability_reference.cpp
  tests/reference/test_paired_statistics_reference.cpp
  tests/reference/test_temperature_reference.cpp)
target_link_libraries(tinct_assess_reference_tests PRIVATE tinct_assess tinct_catch_main)
# Three fixtures, the list's ';' escaped for catch_discover_tests as above.
catch_discover_tests(tinct_assess_reference_tests PROPERTIES
  FIXTURES_REQUIRED "paired_statistics_reference\\\\\\\\;temperature_reference\\\\\\\\;applicability_reference"
  ENVIRONMENT "TINCT_TEST_DATA=${TINCT_TEST_DATA}")

# tinct pair: real data, GDAL's own warper, co-registration and bad input.
tinct_script_test(reference_pair_l7_vs_gdal ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/reference/pair_l7_vs_gdal.py)
set_tests_properties(reference_pair_l7_vs_gdal PROPERTIES FIXTURES_REQUIRED debian_data)
tinct_script_test(reference_pair_resampling_vs_gdalwarp
  ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/reference/pair_resampling_vs_gdalwarp.py)
tinct_script_test(pair_coregistration ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/integration/pair_coregistration.py)
tinct_script_test(pair_bad_input ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/integration/pair_bad_input.py)

# tinct label: points to scene CRS against PROJ's cs2cs, real data against GDAL, date matching,
# polygons, label rasters, vector formats and bad input.
add_executable(tinct_point_transform_tool tests/reference/point_transform_tool.cpp)
target_link_libraries(tinct_point_transform_tool PRIVATE tinct_data)
tinct_script_test(reference_labels_transform_vs_cs2cs ${DEBIAN_PYTHON}
  ${CMAKE_SOURCE_DIR}/tests/reference/labels_transform_vs_cs2cs.py $<TARGET_FILE:tinct_point_transform_tool>)
tinct_script_test(reference_label_l7_vs_gdal ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/reference/label_l7_vs_gdal.py)
set_tests_properties(reference_label_l7_vs_gdal PROPERTIES FIXTURES_REQUIRED debian_data)
tinct_script_test(label_matching ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/integration/label_matching.py)
tinct_script_test(label_sources ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/integration/label_sources.py)
tinct_script_test(label_bad_input ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/integration/label_bad_input.py)

# The demo scenario's generator in its small size, through survey, pair and label with the
# example configs (examples/aldery-marsh).
tinct_script_test(aldery_scenario ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/integration/aldery_scenario.py)

# The demo reduced to a few minutes (small district, few steps, one seed and budget): every
# stage's outputs exist and agree; study and map are checked when the build has them.
tinct_script_test(demo_reduced ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/integration/demo_reduced.py)
set_tests_properties(demo_reduced PROPERTIES LABELS "demo;integration" TIMEOUT 600)

# tinct pretrain and export end to end.
tinct_script_test(pretrain_runs ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/integration/pretrain_runs.py)
tinct_script_test(reference_pretrain_l7_colour ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/reference/pretrain_l7_colour.py)
set_tests_properties(reference_pretrain_l7_colour PROPERTIES FIXTURES_REQUIRED debian_data)

# safetensors files against the format's description, read and written with numpy alone;
# the tool writes tinct's sample and reads the script's files.
add_executable(tinct_safetensors_tool tests/reference/safetensors_tool.cpp)
target_link_libraries(tinct_safetensors_tool PRIVATE tinct_train)
tinct_script_test(reference_safetensors_vs_numpy ${DEBIAN_PYTHON}
  ${CMAKE_SOURCE_DIR}/tests/reference/safetensors_vs_numpy.py $<TARGET_FILE:tinct_safetensors_tool>)
tinct_script_test(finetune_runs ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/integration/finetune_runs.py)
tinct_script_test(finetune_resume ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/integration/finetune_resume.py)
# tinct pretrain --world 2: a killed rank stops the job with a clear error; --resume on one process.
tinct_script_test(data_parallel_runs ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/integration/data_parallel_runs.py)
tinct_script_test(reference_finetune_l7_index_rule
  ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/reference/finetune_l7_index_rule.py)
set_tests_properties(reference_finetune_l7_index_rule PROPERTIES FIXTURES_REQUIRED debian_data)

# Sub-pixel co-registration (upsampled DFT) against scikit-image on the real Landsat 7 subset.
add_executable(tinct_shift_tool tests/reference/shift_tool.cpp)
target_link_libraries(tinct_shift_tool PRIVATE tinct_data)
tinct_script_test(reference_coregistration_l7_vs_skimage ${DEBIAN_PYTHON}
  ${CMAKE_SOURCE_DIR}/tests/reference/coregistration_l7_vs_skimage.py $<TARGET_FILE:tinct_shift_tool>)
set_tests_properties(reference_coregistration_l7_vs_skimage PROPERTIES FIXTURES_REQUIRED debian_data)

# What a new user trips over: command-line and config messages, silent traps, what check
# refuses, sensor profiles, readable previews.
tinct_script_test(cli_messages ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/integration/cli_messages.py)
tinct_script_test(config_traps ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/integration/config_traps.py)
tinct_script_test(check_refusals ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/integration/check_refusals.py)
tinct_script_test(sensor_profiles ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/integration/sensor_profiles.py)
tinct_script_test(pretrain_previews ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/integration/pretrain_previews.py)

# Pixel baselines against scikit-learn on the real Landsat 7 subset: the tool writes features
# and predictions for the splits the script chooses; the script fits scikit-learn on the same.
add_executable(tinct_baseline_tool tests/reference/baseline_tool.cpp)
target_link_libraries(tinct_baseline_tool PRIVATE tinct_baselines)
tinct_script_test(reference_baselines_l7_vs_sklearn ${DEBIAN_PYTHON}
  ${CMAKE_SOURCE_DIR}/tests/reference/baselines_l7_vs_sklearn.py $<TARGET_FILE:tinct_baseline_tool>)
set_tests_properties(reference_baselines_l7_vs_sklearn PROPERTIES FIXTURES_REQUIRED debian_data)

# Stores: a second writer is refused while the first, stopped mid-write by strace, finishes.
tinct_script_test(store_concurrency ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/integration/store_concurrency.py)

# The study report (no LibTorch): a hand-made sample (invented numbers) written as report.html,
# parsed as HTML, every inline SVG as XML, and rendered to a PNG by headless Chromium without
# console errors (study_report_render installs Debian's chromium if it can, else is skipped
# saying why). The PNG stays in the test data folder to be looked at.
add_executable(tinct_sample_report tests/integration/write_sample_report.cpp
                                   tests/support/sample_study_report.cpp)
target_include_directories(tinct_sample_report PRIVATE ${CMAKE_SOURCE_DIR}/tests/support)
target_link_libraries(tinct_sample_report PRIVATE tinct_study)
tinct_script_test(study_report_html ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/integration/study_report.py
  $<TARGET_FILE:tinct_sample_report> ${TINCT_TEST_DATA}/study_report_html)
tinct_script_test(study_report_render ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/integration/study_report.py
  $<TARGET_FILE:tinct_sample_report> ${TINCT_TEST_DATA}/study_report_render --render)
set_tests_properties(study_report_render PROPERTIES SKIP_RETURN_CODE 77)
# tinct study end to end on generated data: summary files, paired design, SciPy's statistics, resume.
tinct_script_test(study_runs ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/integration/study_runs.py)
tinct_script_test(study_ranks ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/integration/study_ranks.py)

# --force replacement killed by strace at each of its steps; a store written onto a full tmpfs.
tinct_script_test(store_replacement ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/integration/store_replacement.py)

# The GeoTIFF writer alone: written files read back by gdalinfo -json and GDAL's COG validator.
add_executable(tinct_geotiff_tool tests/reference/geotiff_tool.cpp)
target_link_libraries(tinct_geotiff_tool PRIVATE tinct_data)
tinct_script_test(reference_geotiff_writer_vs_gdal ${DEBIAN_PYTHON}
  ${CMAKE_SOURCE_DIR}/tests/reference/geotiff_writer_vs_gdal.py $<TARGET_FILE:tinct_geotiff_tool>)

# Splits and budgets checked from the outside in WGS 84 across Greenwich: blocks against
# numpy.floor, the buffer against scipy's cdist, folds with GroupKFold's semantics, the budget
# per class and the labelled chips read, split.seed, assess on the run's own store, one-class sides.
tinct_script_test(reference_split_wgs84_vs_numpy ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/reference/split_wgs84_vs_numpy.py)
# tinct map: georeferencing against gdalinfo -json, masks, --points, dense vs exact, AOA against
# numpy on generated scenes; COG validation on the Landsat 7 subset.
tinct_script_test(map_synthetic ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/integration/map_synthetic.py)
tinct_script_test(reference_map_l7_cog ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/reference/map_l7_cog.py)
set_tests_properties(reference_map_l7_cog PROPERTIES FIXTURES_REQUIRED debian_data)
tinct_script_test(reference_heads_l7_vs_sklearn
  ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/reference/heads_l7_vs_sklearn.py)
set_tests_properties(reference_heads_l7_vs_sklearn PROPERTIES FIXTURES_REQUIRED debian_data)
# Reliability: checksums on every artefact, a full disk during checkpoint and model writes.
tinct_script_test(artefact_checksums ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/integration/artefact_checksums.py)
tinct_script_test(disk_full_runs ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/integration/disk_full_runs.py)
set_tests_properties(disk_full_runs PROPERTIES SKIP_RETURN_CODE 77)
tinct_script_test(bad_input_sweep ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/integration/bad_input_sweep.py)
tinct_script_test(crash_points ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/integration/crash_points.py)
tinct_script_test(crash_study_map ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/integration/crash_study_map.py)
tinct_script_test(resume_rate_change ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/integration/resume_rate_change.py)
tinct_script_test(memory_limits ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/integration/memory_limits.py)
# AddressSanitizer reserves terabytes of address space for its shadow memory, so no process
# starts under ulimit -v: the test cannot run in the sanitizer build (DEVELOPERS.md: Sanitisers).
if(TINCT_SANITIZE)
  set_tests_properties(memory_limits PROPERTIES DISABLED TRUE)
endif()
