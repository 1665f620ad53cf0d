// Writes the hand-made sample study (invented numbers) as report.html, minimal.html and
// results.txt into the folder given, with a preview PNG drawn by OpenCV, for
// study_report.py to parse and render. Prints the terminal table.
#include <cstdio>
#include <filesystem>
#include <iostream>

#include <opencv2/imgcodecs.hpp>
#include <opencv2/imgproc.hpp>

#include "sample_study_report.hpp"
#include "study/report_html.hpp"
#include "study/results_table.hpp"
#include "util/atomic_file.hpp"

namespace {

// Four chips side by side twice (true | predicted), smooth colours standing in for scenes.
void write_preview(const std::filesystem::path& file) {
  cv::Mat image(64, 256, CV_8UC3);
  for (int r = 0; r < image.rows; ++r) {
    for (int c = 0; c < image.cols; ++c) {
      const int chip = (c % 128) / 32, x = c % 32;
      const bool predicted = c >= 128;
      const int blur = predicted ? 6 : 0;  // the prediction is smoother than the truth
      image.at<cv::Vec3b>(r, c) = cv::Vec3b(static_cast<uchar>(60 + 40 * chip + ((r + x) % 16) * (8 - blur / 2)),
                                            static_cast<uchar>(90 + 2 * r - blur),
                                            static_cast<uchar>(70 + 3 * x + 20 * chip));
    }
  }
  cv::imwrite(file.string(), image);
}

}  // namespace

int main(int argc, char** argv) {
  if (argc != 2) {
    std::cerr << "usage: write_sample_report OUTPUT_FOLDER\n";
    return 2;
  }
  const std::filesystem::path folder = argv[1];
  std::filesystem::create_directories(folder);
  write_preview(folder / "preview.png");
  const tinct::StudyReport report = tinct::testing::sample_study_report(folder / "preview.png");
  tinct::write_study_report_html(report, folder / "report.html");
  tinct::write_study_report_html(tinct::testing::minimal_study_report(), folder / "minimal.html");
  const std::string table = tinct::study_results_table(report);
  tinct::write_file_atomic(folder / "results.txt", table);
  std::cout << table;
  return 0;
}
