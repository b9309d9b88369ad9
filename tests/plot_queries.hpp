#pragma once
// Reading back what a plot drew: the points of an SVG path written as
// "M x y L x y ... M x y ..." (the only commands the plot writer uses).

#include <cstdlib>
#include <stdexcept>
#include <string>
#include <utility>
#include <vector>

struct PathPoints {
  int subpaths = 0;
  std::vector<std::pair<double, double>> points;
};

inline PathPoints path_points(const std::string& d) {
  PathPoints out;
  const char* p = d.c_str();
  while (*p) {
    const char command = *p++;
    if (command != 'M' && command != 'L') throw std::runtime_error("unexpected path command");
    if (command == 'M') ++out.subpaths;
    char* end = nullptr;
    const double x = std::strtod(p, &end);
    p = end;
    const double y = std::strtod(p, &end);
    p = end;
    out.points.push_back({x, y});
  }
  return out;
}
