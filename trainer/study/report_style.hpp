// The look of report.html as one stylesheet embedded in the page: system fonts (nothing
// fetched), a readable measure, tables with aligned numbers, figures that shrink to the
// window, and print rules so the report prints as it reads on screen.
#pragma once

namespace tinct {

extern const char* const kReportStyle;

}  // namespace tinct
