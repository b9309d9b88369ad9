#pragma once
// elaborate's output and every analysis' input: a flat circuit of numbers.
// No text, no params, no blocks: block instances are expanded into dotted
// names ("F1.R1", node "F1.x"), models are resolved, values are in SI units.

#include <complex>
#include <cstddef>
#include <limits>
#include <map>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "tacet/common/name_index.hpp"
#include "tacet/language/element_kinds.hpp"
#include "tacet/language/source.hpp"
#include "tacet/circuit/spec.hpp"

namespace tacet {

/// How a toleranced value spreads between its limits in `tacet spread`:
/// uniform over +-tol (the default), or normal with sigma = tol/3 and draws
/// beyond +-tol drawn again (common practice: tol read as a 3-sigma limit).
enum class Distribution { uniform, normal };
const char* to_string(Distribution dist);

/// An op-amp model parameter that spreads (`gbw_tol 30%`): the key of the
/// parameter ("gbw") and its relative tolerance (0.3).
struct ModelTolerance {
  std::string key;
  double tolerance = 0;
};

/// Op-amp macromodel (all values SI). A(s) = aol / ((1 + s/wp)(1 + s/wp2)),
/// wp = 2 pi gbw / aol, wp2 = 2 pi fp2 (no second pole when fp2 == 0). The
/// internal voltage A(s)(v+ - v-) drives the output pin through rout.
struct OpAmpModel {
  std::string name;
  double gbw = 0;        ///< gain-bandwidth product, Hz (required)
  double aol = 1e6;      ///< DC open-loop gain, V/V
  double fp2 = 0;        ///< second pole, Hz; 0: none
  double rout = 0;       ///< output resistance, ohm
  double rin = 0;        ///< differential input resistance, ohm; 0: open
  double en = 0;         ///< input voltage noise density (white part), V/sqrt(Hz)
  double fce = 0;        ///< voltage-noise 1/f corner, Hz
  double in = 0;         ///< input current noise density (white part), A/sqrt(Hz)
  double fci = 0;        ///< current-noise 1/f corner, Hz
  double vos = 0;        ///< largest input offset voltage magnitude, V
  double ib = 0;         ///< bias current into each input pin, A
  double ios = 0;        ///< largest input offset current magnitude, A
  double swing = 0;      ///< how far inside each rail the output saturates, V
  double slew = 0;       ///< slew rate, V/s; 0: not given
  std::optional<double> vcm_low;   ///< inputs must stay this far above the low rail, V
  std::optional<double> vcm_high;  ///< inputs must stay this far below the high rail, V
  /// Common-mode rejection at DC, V/V (written in dB: `cmrr 100dB`); 0: none
  /// (infinite rejection). The gain source sees v+ + ((v+ + v-)/2)/CMRR(f) - v-,
  /// CMRR(f) = cmrr / (1 + j f/fcmrr).
  double cmrr = 0;
  double fcmrr = 0;      ///< Hz where the CMRR starts to fall 20 dB/decade; 0: no roll-off
  double cin_diff = 0;   ///< capacitance between the inputs, F
  double cin_cm = 0;     ///< capacitance from each input to gnd, F
  /// Power-supply rejection, V/V (written in dB); 0: none given. A supply
  /// ripple r appears as r / psrr in series with the + input.
  double psrr = 0;
  std::optional<double> ib_max;  ///< worst bias current magnitude at 25 C, A; `ib` stays typical
  double vos_drift = 0;  ///< largest offset drift magnitude, V/C (from 25 C)
  double ib_double = 0;  ///< C per doubling of ib and ios above 25 C; 0: no temperature dependence
  double iout_max = 0;   ///< largest output current magnitude, A; 0: not given
  std::vector<ModelTolerance> tolerances;  ///< the parameters that spread, in the order written
  Distribution dist = Distribution::uniform;  ///< how every one of them spreads
  SourceLocation where;
};

/// The model keys that may carry a tolerance (`KEY_tol`): the small-signal
/// and noise parameters. vos, ib, ios are already worst-case limits and the
/// swing and input ranges are limits too, so they take none.
const std::vector<std::string>& toleranced_model_keys();
/// The field of a toleranced key ("gbw" -> &model.gbw); nullptr for any other key.
double* model_parameter(OpAmpModel& model, std::string_view key);

/// The ripple frequency when `ripple_f=` is not given: full-wave rectified 50 Hz mains.
inline constexpr double kDefaultRippleHz = 100.0;

/// The temperature the model's vos, ib, ib_max and ios are given at, C.
inline constexpr double kModelReferenceCelsius = 25.0;

/// An ambient range the DC errors are taken over (`--ambient-range 0C..70C`), C.
struct AmbientRange {
  double low = 0;
  double high = 0;
};

/// How a source's largest level was written: `level=40Vrms`, `level=56.6Vpk`
/// or `level=200W load=8ohm` (power into a load, P = V_rms^2 / R).
enum class LevelUnit { rms, peak, power };

/// vsource: the largest signal the input must accept, for the headroom check.
struct SignalLevel {
  LevelUnit unit = LevelUnit::peak;
  double value = 0;  ///< V rms, V peak or W, by `unit`
  double load = 0;   ///< ohm; only with LevelUnit::power
};

struct Rails {
  double high = 0;  ///< V
  double low = 0;   ///< V
};

/// Node index 0 is gnd. `nodes` holds, per kind:
///   resistor/capacitor/inductor: {a, b}
///   vsource/isource: {plus, minus}; an isource drives current from plus
///     through itself to minus
///   vcvs/vccs: {out_plus, out_minus, control_plus, control_minus}
///   opamp: {plus_input, minus_input, output}
struct Element {
  ElementKind kind = ElementKind::resistor;
  std::string name;  ///< hierarchical: "F1.R1"
  std::vector<int> nodes;
  double value = 0;       ///< ohm, farad, henry, V/V (vcvs gain) or siemens (vccs gm)
  double dc = 0;          ///< sources: DC value, V or A
  double ac_magnitude = 0;  ///< sources: AC magnitude, V or A
  double ac_phase = 0;    ///< sources: AC phase, degrees
  double tolerance = 0;   ///< relative (0.01 = 1 %); 0: not given
  Distribution dist = Distribution::uniform;  ///< how `tolerance` (and `ratio`) spread
  /// Matched set (`match=RA`): the parts of one set share one draw within their
  /// own `tolerance`, and each differs from it by its own `ratio`. The name is
  /// qualified like the element's ("F1.RA"); empty: not in a set.
  std::string match;
  double ratio = 0;       ///< relative ratio tolerance inside the matched set
  bool noiseless = false;
  int model = -1;         ///< opamp: index into Circuit::models
  std::optional<Rails> rails;  ///< opamp: rails= on the instance
  std::optional<SignalLevel> level;  ///< vsource: level= (and load=)
  double band_low = 0;    ///< vsource: headroom band start, Hz; 0: not given
  double band_high = 0;   ///< vsource: headroom band end, Hz; 0: not given
  SourceLocation where;

  std::complex<double> ac_phasor() const;
};

/// The ambient temperatures tacet models, in degrees Celsius: above absolute
/// zero, and no hotter than any circuit board survives. Empty when `celsius`
/// is inside, else the words that say why not.
inline constexpr double kColdestCelsius = -273.15;
inline constexpr double kHottestCelsius = 1000.0;
std::string ambient_problem(double celsius);

struct Circuit {
  std::string title;
  double ambient_celsius = 25.0;
  std::optional<AmbientRange> ambient_range;  ///< the offsets' temperature range; none: the ambient
  std::optional<Rails> supply;
  double supply_ripple = 0;  ///< V peak of ripple on the rails (`ripple=` on supply); 0: none
  double supply_ripple_hz = 100;  ///< Hz, its frequency (`ripple_f=`)
  std::vector<std::string> node_names{"gnd"};  ///< index = node id
  std::vector<Element> elements;
  std::vector<OpAmpModel> models;
  std::vector<SourceLocation> node_where;  ///< where each node first appeared
  std::vector<Spec> specs;                 ///< the budget, in the order written
  std::map<std::string, double> params;    ///< the file's top-level params, for diffs

  /// Node id by name, adding it when new.
  int node(const std::string& name, SourceLocation where = {});
  std::optional<int> find_node(const std::string& name) const;
  /// Room for `count` nodes before node() grows its tables.
  void reserve_nodes(std::size_t count);
  std::optional<std::size_t> find_element(const std::string& name) const;
  /// An op amp's model (`e.model` indexes `models`).
  const OpAmpModel& model_of(const Element& e) const;
  std::size_t node_count() const { return node_names.size(); }

 private:
  NameIndex node_ids_ = gnd_only();  // into node_names
  static NameIndex gnd_only();
};

}  // namespace tacet
