# libFuzzer targets (DEVELOPERS.md: Fuzzing), built only with -DTINCT_FUZZ=ON and clang in a
# build folder of their own; scripts/fuzz.sh builds and runs them. Each links the plain C++
# libraries it reads with (tinct_data, tinct_artifacts: no LibTorch).
set(TINCT_FUZZ_TARGETS config label_csv label_geojson store_manifest chips_csv archive_checksum safetensors)

add_custom_target(tinct_fuzz)
foreach(target ${TINCT_FUZZ_TARGETS})
  add_executable(tinct_fuzz_${target} EXCLUDE_FROM_ALL tests/fuzz/fuzz_${target}.cpp)
  target_link_libraries(tinct_fuzz_${target} PRIVATE tinct_data tinct_artifacts)
  target_link_options(tinct_fuzz_${target} PRIVATE -fsanitize=fuzzer)
  add_dependencies(tinct_fuzz tinct_fuzz_${target})
endforeach()
