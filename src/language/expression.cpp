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
    if (id.text == "s" || id.text == "j") {
      report(id,
             fmt::format("'{}' is {}, which only an expression in s may use", id.text,
                         id.text == "s" ? "the complex frequency" : "the imaginary unit"),
             "a value here is a real number; expressions in s are written after target=");
      return std::nullopt;
    }
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

// ---- expressions in s ---------------------------------------------------------

using Complex = std::complex<double>;

struct ComplexFunction {
  const char* name;
  std::size_t arity;
  Complex (*fn)(const Complex* x);
};

// par(a, b) is a*b/(a+b): two impedances in parallel. abs, re, im, arg and db
// give real values (arg in radians, db as 20 log10 |z|).
const ComplexFunction kComplexFunctions[] = {
    {"sqrt", 1, [](const Complex* x) { return std::sqrt(x[0]); }},
    {"exp", 1, [](const Complex* x) { return std::exp(x[0]); }},
    {"ln", 1, [](const Complex* x) { return std::log(x[0]); }},
    {"log10", 1, [](const Complex* x) { return std::log10(x[0]); }},
    {"abs", 1, [](const Complex* x) { return Complex(std::abs(x[0])); }},
    {"re", 1, [](const Complex* x) { return Complex(x[0].real()); }},
    {"im", 1, [](const Complex* x) { return Complex(x[0].imag()); }},
    {"conj", 1, [](const Complex* x) { return std::conj(x[0]); }},
    {"arg", 1, [](const Complex* x) { return Complex(std::arg(x[0])); }},
    {"db", 1, [](const Complex* x) { return Complex(20 * std::log10(std::abs(x[0]))); }},
    {"undb", 1, [](const Complex* x) { return std::pow(Complex(10.0), x[0] / 20.0); }},
    {"sin", 1, [](const Complex* x) { return std::sin(x[0]); }},
    {"cos", 1, [](const Complex* x) { return std::cos(x[0]); }},
    {"par", 2, [](const Complex* x) { return x[0] * x[1] / (x[0] + x[1]); }},
};

// z^w, by repeated multiplication when w is a small whole number (s^2 exactly).
Complex power(Complex z, Complex w) {
  if (w.imag() == 0 && w.real() == std::round(w.real()) && std::abs(w.real()) <= 64) {
    const int n = static_cast<int>(w.real());
    Complex out = 1.0;
    for (int k = 0; k < std::abs(n); ++k) out *= z;
    return n < 0 ? 1.0 / out : out;
  }
  return std::pow(z, w);
}

/// Turns a syntax tree into postfix steps; names other than s and j and every
/// number go through the real evaluator, so units and params mean what they
/// mean in a param.
class SCompiler {
 public:
  SCompiler(int file_id, const Scope& scope, Diagnostics& diagnostics)
      : real_(file_id, scope, Dimension::any, diagnostics), file_(file_id),
        diagnostics_(diagnostics) {}

  bool operator()(const ast::Quantity& q) { return constant(real_(q)); }

  bool operator()(const ast::Identifier& id) {
    if (id.text == "s") return push({ComplexExpression::Op::s, {}, 0});
    if (id.text == "j") return push({ComplexExpression::Op::constant, Complex(0, 1), 0});
    return constant(real_(id));
  }

  bool operator()(const ast::Unary& u) {
    if (!compile(u.operand)) return false;
    return u.op == '-' ? push({ComplexExpression::Op::negate, {}, 0}) : true;
  }

  bool operator()(const ast::Chain& c) {
    if (!compile(c.first)) return false;
    for (const auto& op : c.rest) {
      if (!compile(op.operand)) return false;
      using Op = ComplexExpression::Op;
      push({op.op == '+'   ? Op::add
            : op.op == '-' ? Op::subtract
            : op.op == '*' ? Op::multiply
            : op.op == '/' ? Op::divide
                           : Op::power,
            {}, 0});
    }
    return true;
  }

  bool operator()(const ast::Call& call) {
    std::vector<std::string> names;
    for (std::size_t i = 0; i < std::size(kComplexFunctions); ++i) {
      const ComplexFunction& f = kComplexFunctions[i];
      names.emplace_back(f.name);
      if (call.function.text != f.name) continue;
      if (call.args.size() != f.arity) {
        report(call, fmt::format("{}() takes {} argument{}, not {}", f.name, f.arity,
                                 f.arity == 1 ? "" : "s", call.args.size()), "");
        return false;
      }
      for (const auto& a : call.args)
        if (!compile(a)) return false;
      return push({ComplexExpression::Op::call, {}, i});
    }
    report(call.function, fmt::format("unknown function '{}' in an expression in s", call.function.text),
           choice_hint(call.function.text, names, "functions"));
    return false;
  }

  template <typename T>
  bool operator()(const ast::x3::forward_ast<T>& node) {
    return (*this)(node.get());
  }

  // A part without s is a plain number, read exactly as a param reads it.
  bool compile(const ast::Expr& e) {
    return mentions_s(e) ? boost::apply_visitor(*this, e) : constant(real_.eval(e));
  }

  std::vector<ComplexExpression::Step> steps;

 private:
  bool push(ComplexExpression::Step step) {
    steps.push_back(step);
    return true;
  }
  bool constant(std::optional<double> v) {
    return v && push({ComplexExpression::Op::constant, Complex(*v), 0});
  }
  void report(const ast::Located& where, std::string message, std::string hint) const {
    diagnostics_.error({file_, where.offset}, std::move(message), std::move(hint),
                       std::max<std::uint32_t>(1, where.length));
  }

  Evaluator real_;
  int file_;
  Diagnostics& diagnostics_;
};

struct MentionsS {
  bool operator()(const ast::Quantity&) const { return false; }
  bool operator()(const ast::Identifier& id) const { return id.text == "s" || id.text == "j"; }
  bool operator()(const ast::Unary& u) const { return mentions_s(u.operand); }
  bool operator()(const ast::Chain& c) const {
    if (mentions_s(c.first)) return true;
    for (const auto& op : c.rest)
      if (mentions_s(op.operand)) return true;
    return false;
  }
  bool operator()(const ast::Call& call) const {
    for (const auto& a : call.args)
      if (mentions_s(a)) return true;
    return false;
  }
  template <typename T>
  bool operator()(const ast::x3::forward_ast<T>& node) const {
    return (*this)(node.get());
  }
};

}  // namespace

bool mentions_s(const ast::Expr& expr) { return boost::apply_visitor(MentionsS{}, expr); }

std::vector<std::string> complex_function_names() {
  std::vector<std::string> names;
  for (const auto& f : kComplexFunctions) names.emplace_back(f.name);
  return names;
}

std::complex<double> ComplexExpression::operator()(std::complex<double> s) const {
  std::vector<Complex> stack;
  stack.reserve(steps.size());
  auto pop = [&] {
    const Complex top = stack.back();
    stack.pop_back();
    return top;
  };
  for (const Step& step : steps) {
    switch (step.op) {
      case Op::constant: stack.push_back(step.value); break;
      case Op::s: stack.push_back(s); break;
      case Op::negate: stack.back() = -stack.back(); break;
      case Op::call: {
        const ComplexFunction& f = kComplexFunctions[step.function];
        const Complex value = f.fn(stack.data() + stack.size() - f.arity);
        stack.resize(stack.size() - f.arity);
        stack.push_back(value);
        break;
      }
      default: {
        const Complex b = pop(), a = pop();
        stack.push_back(step.op == Op::add        ? a + b
                        : step.op == Op::subtract ? a - b
                        : step.op == Op::multiply ? a * b
                        : step.op == Op::divide   ? a / b
                                                  : power(a, b));
      }
    }
  }
  return stack.empty() ? Complex(std::nan("")) : stack.back();
}

std::optional<ComplexExpression> compile_in_s(const ast::Expr& expr, int file_id, const Scope& scope,
                                              Diagnostics& diagnostics) {
  SCompiler compiler(file_id, scope, diagnostics);
  if (!compiler.compile(expr)) return std::nullopt;
  return ComplexExpression{std::move(compiler.steps)};
}

std::optional<double> evaluate(const ast::Expr& expr, int file_id, const Scope& scope,
                               Dimension expected, Diagnostics& diagnostics) {
  return Evaluator(file_id, scope, expected, diagnostics).eval(expr);
}

}  // namespace tacet
