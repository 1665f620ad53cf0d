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
tinct_script_test(check_configs bash ${CMAKE_SOURCE_DIR}/tests/integration/check_configs.sh)

tinct_script_test(reference_survey_vs_gdalinfo
  ${DEBIAN_PYTHON} ${CMAKE_SOURCE_DIR}/tests/reference/survey_vs_gdalinfo.py)
set_tests_properties(reference_survey_vs_gdalinfo PROPERTIES FIXTURES_REQUIRED debian_data)
