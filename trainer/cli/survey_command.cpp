// tinct survey RASTER...: what each raster holds, as a table or as JSON.
#include <iostream>

#include "cli/commands.hpp"
#include "raster/survey.hpp"
#include "raster/survey_report.hpp"

namespace tinct {

struct SurveyOptions {
  std::vector<std::string> rasters;
  bool json = false;
};

static void run_survey(const SurveyOptions& options) {
  Json all = Json::array();
  for (const auto& path : options.rasters) {
    const RasterSurvey survey = survey_raster(path);
    if (options.json) {
      all.push_back(survey_json(survey));
    } else {
      std::cout << survey_table(survey) << std::flush;
    }
  }
  if (options.json) std::cout << json_text(all, 2) << std::endl;
}

CommandRun setup_survey(CLI::App& command, const GlobalOptions&) {
  auto options = std::make_shared<SurveyOptions>();
  command.add_option("rasters", options->rasters, "Raster files (any format GDAL reads)")->required();
  command.add_flag("--json", options->json, "Print a JSON array, one object per raster");
  return [options] { run_survey(*options); };
}

}  // namespace tinct
