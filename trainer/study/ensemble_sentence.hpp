// An ensemble arm in plain words: how often exactly one member is wrong (members that err
// on the same chips leave averaging little to fix), and how it scores against its best
// member, judged by a paired comparison when there is one. Never assumes it is better.
#pragma once

#include <string>

#include "study/study_report.hpp"

namespace tinct {

std::string ensemble_sentence(const StudyReport& report, const EnsembleDiversity& diversity);

}  // namespace tinct
