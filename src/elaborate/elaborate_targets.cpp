// Elaboration of what a response is compared with: a deviation spec's target
// curve (a built-in curve or an expression in s) and a mask spec's points.

#include <cmath>

#include <fmt/format.h>

#include "elaborate/elaborator.hpp"
#include "tacet/common/format.hpp"

namespace tacet::detail {

bool Elaborator::read_target(Spec& spec, const SpecKeys& given) {
  const KeyValue& option = given.at("target");
  const ast::Expr& written = unwrap(*option.value);
  const auto* id = boost::get<ast::Identifier>(&written);
  if (id && !mentions_s(written) && !globals_.find(id->text) && id->text != "pi") {
    const BuiltinCurve* curve = find_builtin_curve(id->text);
    if (!curve) {
      error(option.file, *id, fmt::format("unknown target curve '{}'", id->text),
            choice_hint(id->text, builtin_curve_names(), "curves") +
                " (or an expression in s, e.g. 1/(1+s*75u))");
      return false;
    }
    spec.target = target_curve(*curve);
    return true;
  }
  auto compiled = compile_in_s(*option.value, option.file, globals_, diagnostics_);
  if (!compiled) return false;
  const ast::Located where = extent(*option.value);
  const std::string_view text =
      std::string_view(sources_.file(option.file).text).substr(where.offset, where.length);
  spec.target = {std::string(text), [e = std::move(*compiled)](std::complex<double> s) { return e(s); }};
  // Both curves are normalised at ref: the target must have a finite, non-zero value there.
  const std::complex<double> at_ref = spec.target.at(spec.ref);
  if (!std::isfinite(std::abs(at_ref)) || std::abs(at_ref) == 0) {
    error(option.file, where,
          fmt::format("the target is {} at ref={}Hz, where the deviation is normalised",
                      std::abs(at_ref) == 0 ? "zero" : "not finite", format_si(spec.ref)),
          "choose a ref= where the target has a finite, non-zero value");
    return false;
  }
  return true;
}

bool Elaborator::read_mask(Spec& spec, const ast::Spec& ast_spec, int file) {
  bool ok = true;
  const ast::Option* last_at = nullptr;
  for (const ast::Option& o : ast_spec.options) {
    const std::string& key = o.key.text;
    if (key != "at" && key != "min" && key != "max") continue;
    const auto value = value_of(*o.value, file, globals_, key == "at" ? Dimension::frequency
                                                                      : Dimension::decibel);
    if (!value) {
      ok = false;
      continue;
    }
    if (key == "at") {
      if (!(*value > 0)) {
        error(file, extent(*o.value), "at= must be above 0 Hz");
        ok = false;
      } else if (!spec.mask.empty() && !(*value > spec.mask.back().f)) {
        error(file, extent(*o.value),
              fmt::format("a mask's frequencies must increase: at={}Hz follows at={}Hz",
                          format_si(*value), format_si(spec.mask.back().f)),
              "list the points from the lowest frequency to the highest");
        ok = false;
      }
      spec.mask.push_back({*value, std::nullopt, std::nullopt});
      last_at = &o;
      continue;
    }
    if (spec.mask.empty()) {
      error(file, o.key, fmt::format("{}= of a mask bounds the point before it", key),
            "start each point with at=: at=4kHz min=-0.1dB max=0.1dB");
      ok = false;
      continue;
    }
    auto& bound = key == "min" ? spec.mask.back().low : spec.mask.back().high;
    if (bound) {
      error(file, o.key, fmt::format("the point at {}Hz has {}= twice", format_si(spec.mask.back().f), key));
      ok = false;
    }
    bound = *value;
  }
  if (!ok) return false;
  if (spec.mask.size() < 2) {
    error(file, last_at ? static_cast<const ast::Located&>(*last_at) : ast_spec.name,
          fmt::format("mask '{}' needs at least two points", spec.name),
          "at=20Hz min=-0.1dB max=0.1dB at=4kHz min=-0.1dB max=0.1dB");
    return false;
  }
  for (const MaskPoint& p : spec.mask) {
    if (!p.low && !p.high) {
      error(file, ast_spec.name, fmt::format("the point at {}Hz of mask '{}' has neither min= nor max=",
                                             format_si(p.f), spec.name));
      return false;
    }
    if (p.low && p.high && *p.low > *p.high) {
      error(file, ast_spec.name, fmt::format("the point at {}Hz of mask '{}' has min={}dB above max={}dB",
                                             format_si(p.f), spec.name, *p.low, *p.high));
      return false;
    }
  }
  spec.from = spec.mask.front().f;
  spec.to = spec.mask.back().f;
  return true;
}

}  // namespace tacet::detail
