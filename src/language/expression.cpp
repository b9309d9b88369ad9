#include "tacet/language/expression.hpp"

#include <charconv>
#include <cmath>
#include <numbers>

#include <fmt/format.h>

namespace tacet {

const ParamValue* Scope::find(const std::string& name) const {
  for (const Scope* s = this; s != nullptr; s = s->parent)
    if (auto it = s->params.find(name); it != s->params.end()) return &it->second;
  return nullptr;
}

std::vector<std::string> Scope::names() const {
  std::vector<std::string> out;
  for (const Scope* s = this; s != nullptr; s = s->parent)
    for (const auto& [name, value] : s->params) out.push_back(name);
  return out;
}

const ast::Expr& unwrap(const ast::Expr& expr) {
  const ast::Expr* e = &expr;
  while (const auto* chain = boost::get<ast::x3::forward_ast<ast::Chain>>(e)) {
    if (!chain->get().rest.empty()) break;
    e = &chain->get().first;
  }
  return *e;
}

ast::Located extent(const ast::Expr& expr) {
  return boost::apply_visitor(
      [](const auto& node) -> ast::Located {
        using T = std::decay_t<decltype(node)>;
        if constexpr (std::is_same_v<T, ast::Quantity> || std::is_same_v<T, ast::Identifier>)
          return node;
        else
          return node.get();
      },
      expr);
}

namespace {

class Evaluator {
 public:
  Evaluator(int file_id, const Scope& scope, Dimension expected, Diagnostics& diagnostics)
      : file_(file_id), scope_(scope), expected_(expected), diagnostics_(diagnostics) {}

  std::optional<double> operator()(const ast::Quantity& q) const {
    double number = 0;
    const char* end = q.digits.data() + q.digits.size();
    auto [ptr, ec] = std::from_chars(q.digits.data(), end, number);
    if (ec == std::errc::result_out_of_range || (ec == std::errc{} && !std::isfinite(number))) {
      report(q, fmt::format("number '{}' is out of range", q.digits), "");
      return std::nullopt;
    }
    if (ec != std::errc{} || ptr != end) {
      report(q, fmt::format("'{}' is not a number", q.digits), "");
      return std::nullopt;
    }
    auto unit = decode_suffix(q.suffix);
    if (!unit) {
      report(q, fmt::format("unknown unit or prefix '{}'", q.suffix), suffix_hint(q.suffix, expected_));
      return std::nullopt;
    }
    if (!unit_fits(unit->dimension, expected_)) {
      std::string hint = suffix_hint(q.suffix, expected_);
      report(q,
             fmt::format("unit '{}' is {}; {} is wanted here", q.suffix,
                         describe(unit->dimension), describe(expected_)),
             hint);
      return std::nullopt;
    }
    return finite(apply_unit(number, *unit, expected_), q);
  }

  std::optional<double> operator()(const ast::Identifier& id) const {
    if (id.text == "pi") return std::numbers::pi;
    if (const ParamValue* p = scope_.find(id.text)) return p->value;
    auto candidates = scope_.names();
    candidates.push_back("pi");
    std::string near = nearest_word(id.text, candidates);
    report(id, fmt::format("unknown name '{}'", id.text),
           near.empty() ? "declare it with 'param " + id.text + " = ...' before this line"
                        : fmt::format("did you mean '{}'?", near));
    return std::nullopt;
  }

  std::optional<double> operator()(const ast::Unary& u) const {
    // -6dB is the ratio 0.5: the sign belongs to the decibels, not to the ratio.
    if (const auto* q = boost::get<ast::Quantity>(&unwrap(u.operand)); q && q->suffix == "dB") {
      ast::Quantity negated = *q;
      if (u.op == '-') negated.digits = "-" + negated.digits;
      return (*this)(negated);
    }
    auto v = eval(u.operand);
    if (!v) return std::nullopt;
    return u.op == '-' ? -*v : *v;
  }

  std::optional<double> operator()(const ast::Chain& c) const {
    auto acc = eval(c.first);
    if (!acc) return std::nullopt;
    for (const auto& op : c.rest) {
      auto rhs = eval(op.operand);
      if (!rhs) return std::nullopt;
      if (op.op == '/' && *rhs == 0.0) {
        report(extent(op.operand), "division by zero", "");
        return std::nullopt;
      }
      acc = apply(op.op, *acc, *rhs);
      if (!finite(*acc, c)) return std::nullopt;
    }
    return acc;
  }

  std::optional<double> operator()(const ast::Call& call) const {
    std::vector<double> args;
    for (const auto& a : call.args) {
      // Function arguments are plain numbers: units inside them still decode,
      // but the expected dimension does not reach through a function.
      auto v = Evaluator(file_, scope_, Dimension::any, diagnostics_).eval(a);
      if (!v) return std::nullopt;
      args.push_back(*v);
    }
    return call_function(call, args);
  }

  std::optional<double> eval(const ast::Expr& e) const { return boost::apply_visitor(*this, e); }

  template <typename T>
  std::optional<double> operator()(const ast::x3::forward_ast<T>& node) const {
    return (*this)(node.get());
  }

 private:
  static double apply(char op, double a, double b) {
    switch (op) {
      case '+': return a + b;
      case '-': return a - b;
      case '*': return a * b;
      case '/': return a / b;
      default: return std::pow(a, b);
    }
  }

  std::optional<double> call_function(const ast::Call& call, const std::vector<double>& a) const {
    struct Function {
      const char* name;
      std::size_t arity;
      double (*fn)(const std::vector<double>&);
      bool (*domain)(const std::vector<double>&);
    };
    static const Function kFunctions[] = {
        {"sqrt", 1, [](const auto& x) { return std::sqrt(x[0]); }, [](const auto& x) { return x[0] >= 0; }},
        {"log10", 1, [](const auto& x) { return std::log10(x[0]); }, [](const auto& x) { return x[0] > 0; }},
        {"ln", 1, [](const auto& x) { return std::log(x[0]); }, [](const auto& x) { return x[0] > 0; }},
        {"exp", 1, [](const auto& x) { return std::exp(x[0]); }, [](const auto&) { return true; }},
        {"abs", 1, [](const auto& x) { return std::abs(x[0]); }, [](const auto&) { return true; }},
        {"db", 1, [](const auto& x) { return 20 * std::log10(x[0]); }, [](const auto& x) { return x[0] > 0; }},
        {"undb", 1, [](const auto& x) { return std::pow(10.0, x[0] / 20); }, [](const auto&) { return true; }},
        {"sin", 1, [](const auto& x) { return std::sin(x[0]); }, [](const auto&) { return true; }},
        {"cos", 1, [](const auto& x) { return std::cos(x[0]); }, [](const auto&) { return true; }},
        {"atan", 1, [](const auto& x) { return std::atan(x[0]); }, [](const auto&) { return true; }},
        {"min", 2, [](const auto& x) { return std::min(x[0], x[1]); }, [](const auto&) { return true; }},
        {"max", 2, [](const auto& x) { return std::max(x[0], x[1]); }, [](const auto&) { return true; }},
        {"par", 2, [](const auto& x) { return x[0] * x[1] / (x[0] + x[1]); },
         [](const auto& x) { return x[0] + x[1] != 0; }},
    };
    std::vector<std::string> names;
    for (const auto& f : kFunctions) {
      names.emplace_back(f.name);
      if (call.function.text != f.name) continue;
      if (a.size() != f.arity) {
        report(call, fmt::format("{}() takes {} argument{}, not {}", f.name, f.arity,
                                 f.arity == 1 ? "" : "s", a.size()), "");
        return std::nullopt;
      }
      if (!f.domain(a)) {
        report(call, fmt::format("{}() is not defined for this argument", f.name), "");
        return std::nullopt;
      }
      return finite(f.fn(a), call);
    }
    report(call.function, fmt::format("unknown function '{}'", call.function.text),
           choice_hint(call.function.text, names, "functions"));
    return std::nullopt;
  }

  std::optional<double> finite(double v, const ast::Located& where) const {
    if (std::isfinite(v)) return v;
    report(where, "value overflows", "");
    return std::nullopt;
  }

  void report(const ast::Located& where, std::string message, std::string hint) const {
    diagnostics_.error({file_, where.offset}, std::move(message), std::move(hint),
                       std::max<std::uint32_t>(1, where.length));
  }

  int file_;
  const Scope& scope_;
  Dimension expected_;
  Diagnostics& diagnostics_;
};

}  // namespace

std::optional<double> evaluate(const ast::Expr& expr, int file_id, const Scope& scope,
                               Dimension expected, Diagnostics& diagnostics) {
  return Evaluator(file_id, scope, expected, diagnostics).eval(expr);
}

}  // namespace tacet
