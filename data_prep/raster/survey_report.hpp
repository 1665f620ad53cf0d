// Renders a RasterSurvey for people (an aligned table) or machines (JSON).
#pragma once

#include <string>

#include "raster/survey.hpp"
#include "util/json_text.hpp"

namespace tinct {

std::string survey_table(const RasterSurvey& survey);
Json survey_json(const RasterSurvey& survey);

}  // namespace tinct
