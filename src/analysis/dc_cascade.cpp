// The worst-case DC bands of a cascade, block by block (dc_cascade.hpp).

#include "tacet/analysis/dc_cascade.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "tacet/solve/block_form.hpp"
#include "tacet/solve/mna.hpp"

namespace tacet {
namespace {

// Rows of one kind of item grouped by block: counts, then offsets, then a fill.
template <typename Item>
std::vector<Item> grouped(std::vector<std::pair<int, Item>>& items, std::size_t blocks, std::vector<int>& begin) {
  begin.assign(blocks + 1, 0);
  for (const auto& [block, item] : items) ++begin[static_cast<std::size_t>(block) + 1];
  for (std::size_t b = 0; b < blocks; ++b) begin[b + 1] += begin[b];
  std::vector<int> fill(begin.begin(), begin.end() - 1);
  std::vector<Item> out(items.size());
  for (const auto& [block, item] : items) out[static_cast<std::size_t>(fill[static_cast<std::size_t>(block)]++)] = item;
  return out;
}

}  // namespace

bool DcCascade::planned_for(const std::vector<CascadeError>& errors) const { return same_rows(errors, planned_); }

void DcCascade::plan(const MnaSystem& mna, const std::vector<CascadeError>& errors) {
  usable_ = false;
  planned_ = errors;
  if (!plan_blocks(mna) || !plan_entries(errors)) return;
  lu_.reserve(kMostBlockUnknowns);
  rhs_.resize(static_cast<std::size_t>(kMostBlockUnknowns));
  usable_ = true;
}

// The blocks, their entries, what each reads from upstream, the unit
// right-hand sides and what is summed; false: no cascade.
bool DcCascade::plan_blocks(const MnaSystem& mna) {
  auto form = block_form(mna.pattern());
  if (!form) return false;
  form_ = std::move(*form);
  const auto un = static_cast<std::size_t>(mna.pattern().n);
  const std::size_t nb = form_.blocks.size();
  blocks_.assign(nb, Block{});
  for (std::size_t b = 0; b < nb; ++b) blocks_[b].size = form_.blocks[b].size;
  const auto& reads = form_.reads;

  // Only the blocks a node voltage depends on are solved: the others (an op
  // amp's output current, found from two voltages and read by nobody) may
  // read as much as they like.
  needed_.assign(nb, false);
  const std::size_t node_unknowns = mna.circuit().node_count() - 1;
  for (std::size_t k = 0; k < node_unknowns; ++k) {
    const auto terms = mna.voltage_terms(static_cast<int>(k) + 1);
    for (int t = 0; t < terms.count; ++t)
      needed_[static_cast<std::size_t>(form_.col_block[static_cast<std::size_t>(terms.term[static_cast<std::size_t>(t)].unknown)])] = true;
  }
  std::vector<int> reads_begin(nb + 1, 0);
  for (const BlockForm::Read& r : reads) ++reads_begin[static_cast<std::size_t>(r.block) + 1];
  for (std::size_t b = 0; b < nb; ++b) reads_begin[b + 1] += reads_begin[b];
  for (std::size_t j = 0; j < nb; ++j) {  // readers before what they read
    if (!needed_[j]) continue;
    if (blocks_[j].size > kMostBlockUnknowns) return false;
    for (int i = reads_begin[j]; i < reads_begin[j + 1]; ++i)
      needed_[static_cast<std::size_t>(form_.col_block[static_cast<std::size_t>(reads[static_cast<std::size_t>(i)].unknown)])] = true;
  }
  std::vector<int> begin;
  interfaces_.clear();
  couple_.clear();
  int t_at = 0;
  for (std::size_t j = 0; j < nb; ++j) {
    Block& block = blocks_[j];
    block.interfaces_begin = static_cast<int>(interfaces_.size());
    for (int i = reads_begin[j]; needed_[j] && i < reads_begin[j + 1]; ++i) {
      const BlockForm::Read& r = reads[static_cast<std::size_t>(i)];
      if (interfaces_.size() == static_cast<std::size_t>(block.interfaces_begin) || interfaces_.back().unknown != r.unknown) {
        interfaces_.push_back({r.unknown, -1, t_at, static_cast<int>(couple_.size()), 0});
        t_at += block.size;
      }
      couple_.push_back({r.row, r.at});
      interfaces_.back().couple_end = static_cast<int>(couple_.size());
    }
    block.interfaces_end = static_cast<int>(interfaces_.size());
  }
  t_.assign(static_cast<std::size_t>(t_at), 0.0);

  // What is summed: every node's voltage, and each interface unknown itself.
  struct Wanted {
    int block, node_unknown;  // node_unknown -1 - u: the raw interface unknown u
    int first_term, term_count;
  };
  std::vector<std::pair<int, Wanted>> wanted;
  std::vector<Term> all_terms;
  for (std::size_t k = 0; k < node_unknowns; ++k) {
    const auto terms = mna.voltage_terms(static_cast<int>(k) + 1);
    if (terms.count == 0) continue;
    const int b = form_.col_block[static_cast<std::size_t>(terms.term[0].unknown)];
    const auto first = static_cast<int>(all_terms.size());
    for (int t = 0; t < terms.count; ++t) {
      const auto& term = terms.term[static_cast<std::size_t>(t)];
      if (form_.col_block[static_cast<std::size_t>(term.unknown)] != b) return false;  // a voltage across blocks
      all_terms.push_back({form_.col_local[static_cast<std::size_t>(term.unknown)], term.coefficient});
    }
    wanted.push_back({b, {b, static_cast<int>(k), first, terms.count}});
  }
  std::vector<int> raw_of(un, -1);
  for (const Interface& i : interfaces_) {
    if (raw_of[static_cast<std::size_t>(i.unknown)] >= 0) continue;
    raw_of[static_cast<std::size_t>(i.unknown)] = 0;
    const int b = form_.col_block[static_cast<std::size_t>(i.unknown)];
    all_terms.push_back({form_.col_local[static_cast<std::size_t>(i.unknown)], 1.0});
    wanted.push_back({b, {b, -1 - i.unknown, static_cast<int>(all_terms.size()) - 1, 1}});
  }
  const std::vector<Wanted> ordered = grouped(wanted, nb, begin);
  node_observable_.assign(node_unknowns, -1);
  observables_.assign(ordered.size(), Observable{});
  terms_.clear();
  for (std::size_t o = 0; o < ordered.size(); ++o) {
    const Wanted& w = ordered[o];
    Observable& obs = observables_[o];
    obs.block = w.block;
    obs.terms_begin = static_cast<int>(terms_.size());
    terms_.insert(terms_.end(), all_terms.begin() + w.first_term, all_terms.begin() + w.first_term + w.term_count);
    obs.terms_end = static_cast<int>(terms_.size());
    if (w.node_unknown >= 0) node_observable_[static_cast<std::size_t>(w.node_unknown)] = static_cast<int>(o);
    else raw_of[static_cast<std::size_t>(-1 - w.node_unknown)] = static_cast<int>(o);
  }
  for (std::size_t b = 0; b < nb; ++b) blocks_[b].observables_begin = begin[b], blocks_[b].observables_end = begin[b + 1];
  for (Interface& i : interfaces_) i.observable = raw_of[static_cast<std::size_t>(i.unknown)];
  return true;
}

// The unit right-hand sides, and per block the errors it sees apart from
// the sums (kept apart at one of its interfaces, or with a right-hand side
// in it), in error order; false: no cascade.
bool DcCascade::plan_entries(const std::vector<CascadeError>& errors) {
  const std::size_t nb = blocks_.size();
  unit_of_row_.assign(form_.row_block.size(), -1);
  std::vector<std::pair<int, Unit>> units;
  for (const CascadeError& e : errors)
    for (int p = 0; p < e.part_count; ++p) {
      const auto row = static_cast<std::size_t>(e.parts[static_cast<std::size_t>(p)].row);
      if (unit_of_row_[row] >= 0 || !needed_[static_cast<std::size_t>(form_.row_block[row])]) continue;
      unit_of_row_[row] = 0;
      units.push_back({form_.row_block[row], {form_.row_block[row], static_cast<int>(row), 0}});  // .row: global until grouped
    }
  std::vector<int> begin;
  units_ = grouped(units, nb, begin);
  int ell_at = 0;
  for (std::size_t b = 0; b < nb; ++b) {
    blocks_[b].units_begin = begin[b], blocks_[b].units_end = begin[b + 1];
    for (int u = begin[b]; u < begin[b + 1]; ++u) {
      Unit& unit = units_[static_cast<std::size_t>(u)];
      unit_of_row_[static_cast<std::size_t>(unit.row)] = u;
      unit.row = form_.row_local[static_cast<std::size_t>(unit.row)];
      unit.ell_at = ell_at;
      ell_at += blocks_[b].size;
    }
  }
  ell_.assign(static_cast<std::size_t>(ell_at), 0.0);

  std::vector<std::vector<std::size_t>> local(nb);
  std::vector<int> home(errors.size(), static_cast<int>(nb));
  error_last_block_.assign(errors.size(), -1);
  for (std::size_t e = 0; e < errors.size(); ++e)
    for (int p = 0; p < errors[e].part_count; ++p) {
      const int b = form_.row_block[static_cast<std::size_t>(errors[e].parts[static_cast<std::size_t>(p)].row)];
      if (!needed_[static_cast<std::size_t>(b)]) continue;  // reaches no node
      home[e] = std::min(home[e], b);
      error_last_block_[e] = std::max(error_last_block_[e], b);
      auto& mine = local[static_cast<std::size_t>(b)];
      if (mine.empty() || mine.back() != e) mine.push_back(e);
    }
  entries_.clear();
  froms_.clear();
  entry_parts_.clear();
  int pending_at = 0;
  struct Seen {
    std::size_t error;
    int interface, slot;  // -1, -1: a right-hand side in this block
  };
  std::vector<Seen> seen;
  for (std::size_t j = nb; j-- > 0;) {
    Block& block = blocks_[j];
    seen.clear();
    for (int i = block.interfaces_begin; i < block.interfaces_end; ++i) {
      const Block& up = blocks_[static_cast<std::size_t>(form_.col_block[static_cast<std::size_t>(interfaces_[static_cast<std::size_t>(i)].unknown)])];
      if (up.sums) {
        if (block.primary >= 0) return false;  // two interfaces carry sums: no cascade
        block.primary = i;
      }
      for (int k = up.entries_begin; k < up.entries_end; ++k) {
        const Entry& entry = entries_[static_cast<std::size_t>(k)];
        if (entry.slot >= 0) seen.push_back({entry.error, i, entry.slot});
      }
    }
    for (const std::size_t e : local[j]) seen.push_back({e, -1, -1});
    std::stable_sort(seen.begin(), seen.end(), [](const Seen& x, const Seen& y) { return x.error < y.error; });
    block.sums = block.primary >= 0;
    block.entries_begin = static_cast<int>(entries_.size());
    for (std::size_t k = 0; k < seen.size();) {
      const std::size_t e = seen[k].error;
      Entry entry{e, static_cast<int>(froms_.size()), 0, static_cast<int>(entry_parts_.size()), 0, -1};
      for (; k < seen.size() && seen[k].error == e; ++k) {
        if (seen[k].interface >= 0) {
          froms_.push_back({seen[k].interface, seen[k].slot});
          continue;
        }
        for (int p = 0; p < errors[e].part_count; ++p) {
          const auto& part = errors[e].parts[static_cast<std::size_t>(p)];
          const int unit = unit_of_row_[static_cast<std::size_t>(part.row)];
          if (unit >= 0 && units_[static_cast<std::size_t>(unit)].block == static_cast<int>(j))
            entry_parts_.push_back({unit, part.coefficient});
        }
      }
      entry.froms_end = static_cast<int>(froms_.size());
      entry.parts_end = static_cast<int>(entry_parts_.size());
      if (home[e] < static_cast<int>(j)) entry.slot = block.pending++;
      else block.sums = true;
      entries_.push_back(entry);
    }
    block.entries_end = static_cast<int>(entries_.size());
    if (block.pending > kMostKeptApart) return false;
    for (int o = block.observables_begin; o < block.observables_end; ++o) {
      observables_[static_cast<std::size_t>(o)].pending_at = pending_at;
      pending_at += block.pending;
    }
  }
  pending_.assign(static_cast<std::size_t>(pending_at), 0.0);
  sums_.assign(observables_.size(), DcSums{});
  return true;
}

bool DcCascade::run(const double* values, const std::vector<CascadeError>& errors) {
  if (!usable_) return false;
  planned_ = errors;  // the same rows; the limits of this run
  for (std::size_t j = blocks_.size(); j-- > 0;)
    if (needed_[j] && !solve_block(j, values)) return false;
  return true;
}

bool DcCascade::solve_block(std::size_t j, const double* values) {
  const Block& b = blocks_[j];
  const int n = b.size;
  double* a = lu_.matrix(n);
  const BlockForm::Block& own = form_.blocks[j];
  for (int i = own.entries_begin; i < own.entries_end; ++i) {
    const BlockForm::Entry& entry = form_.entries[static_cast<std::size_t>(i)];
    a[entry.row * n + entry.col] = values[entry.at];
  }
  if (!lu_.factor()) return false;
  for (int i = b.interfaces_begin; i < b.interfaces_end; ++i) {  // A_jj t = -A_ju
    const Interface& in = interfaces_[static_cast<std::size_t>(i)];
    std::fill(rhs_.begin(), rhs_.begin() + n, 0.0);
    for (int k = in.couple_begin; k < in.couple_end; ++k)
      rhs_[static_cast<std::size_t>(couple_[static_cast<std::size_t>(k)].row)] = -values[couple_[static_cast<std::size_t>(k)].at];
    if (!lu_.solve(rhs_.data(), t_.data() + in.t_at)) return false;
  }
  for (int u = b.units_begin; u < b.units_end; ++u) {
    const Unit& unit = units_[static_cast<std::size_t>(u)];
    std::fill(rhs_.begin(), rhs_.begin() + n, 0.0);
    rhs_[static_cast<std::size_t>(unit.row)] = 1.0;
    if (!lu_.solve(rhs_.data(), ell_.data() + unit.ell_at)) return false;
  }

  const std::vector<CascadeError>& errors = planned_;
  for (int o = b.observables_begin; o < b.observables_end; ++o) {
    const Observable& obs = observables_[static_cast<std::size_t>(o)];
    auto at = [&](const double* column) {
      double v = 0;
      for (int k = obs.terms_begin; k < obs.terms_end; ++k)
        v += terms_[static_cast<std::size_t>(k)].coefficient * column[terms_[static_cast<std::size_t>(k)].col];
      return v;
    };
    DcSums& s = sums_[static_cast<std::size_t>(o)];
    s = DcSums{};
    if (b.primary >= 0) {
      const Interface& in = interfaces_[static_cast<std::size_t>(b.primary)];
      s.add_scaled(sums_[static_cast<std::size_t>(in.observable)], at(t_.data() + in.t_at), errors);
    }
    double* apart = pending_.data() + obs.pending_at;
    for (int i = b.entries_begin; i < b.entries_end; ++i) {
      const Entry& entry = entries_[static_cast<std::size_t>(i)];
      double v = 0;
      for (int f = entry.froms_begin; f < entry.froms_end; ++f) {
        const From& from = froms_[static_cast<std::size_t>(f)];
        const Interface& in = interfaces_[static_cast<std::size_t>(from.interface)];
        v += at(t_.data() + in.t_at) * pending_[static_cast<std::size_t>(observables_[static_cast<std::size_t>(in.observable)].pending_at + from.slot)];
      }
      for (int p = entry.parts_begin; p < entry.parts_end; ++p) {
        const EntryPart& part = entry_parts_[static_cast<std::size_t>(p)];
        v += part.coefficient * at(ell_.data() + units_[static_cast<std::size_t>(part.unit)].ell_at);
      }
      if (!std::isfinite(v)) return false;
      if (entry.slot >= 0) {
        apart[entry.slot] = v;
        continue;
      }
      s.add(entry.error, v, errors);
    }
    if (!s.finite()) return false;
  }
  return true;
}

// A node's sums and the shares still kept apart at it, visited in error order.
template <typename Visit>
void DcCascade::for_apart(int observable, Visit&& visit) const {
  const Observable& obs = observables_[static_cast<std::size_t>(observable)];
  const Block& b = blocks_[static_cast<std::size_t>(obs.block)];
  for (int i = b.entries_begin; i < b.entries_end; ++i) {
    const Entry& entry = entries_[static_cast<std::size_t>(i)];
    if (entry.slot >= 0) visit(entry.error, pending_[static_cast<std::size_t>(obs.pending_at + entry.slot)]);
  }
}

double DcCascade::worst(int unknown) const {
  const int o = node_observable_[static_cast<std::size_t>(unknown)];
  if (o < 0) return 0;
  double sum = sums_[static_cast<std::size_t>(o)].worst;
  for_apart(o, [&](std::size_t e, double v) {
    if (planned_[e].in_band) sum += std::abs(v) * planned_[e].limit;
  });
  return sum;
}

double DcCascade::squares(int unknown) const {
  const int o = node_observable_[static_cast<std::size_t>(unknown)];
  if (o < 0) return 0;
  double sum = sums_[static_cast<std::size_t>(o)].squares;
  for_apart(o, [&](std::size_t e, double v) {
    if (!planned_[e].in_band) return;
    const double term = std::abs(v) * planned_[e].limit;
    sum += term * term;
  });
  return sum;
}

void DcCascade::largest(int unknown, std::size_t count, std::vector<CascadeShare>& out) const {
  out.clear();
  const int o = unknown < 0 ? -1 : node_observable_[static_cast<std::size_t>(unknown)];
  if (o < 0) return;
  DcSums all = sums_[static_cast<std::size_t>(o)];  // the three largest of the sums and of the shares kept apart
  for_apart(o, [&](std::size_t e, double v) {
    if (v != 0) all.insert(e, v, planned_);
  });
  for (int i = 0; i < all.count && out.size() < count; ++i) out.push_back(all.top[static_cast<std::size_t>(i)]);
}

// The error's own right-hand sides' share at a block's local unknown.
double DcCascade::local_value(std::size_t error, int block, int local) const {
  const CascadeError& e = planned_[error];
  double sum = 0;
  for (int p = 0; p < e.part_count; ++p) {
    const int u = unit_of_row_[static_cast<std::size_t>(e.parts[static_cast<std::size_t>(p)].row)];
    if (u < 0) continue;  // in a block no node depends on
    const Unit& unit = units_[static_cast<std::size_t>(u)];
    if (unit.block == block)
      sum += e.parts[static_cast<std::size_t>(p)].coefficient * ell_[static_cast<std::size_t>(unit.ell_at + local)];
  }
  return sum;
}

// x_w = (its own right-hand sides' share) + sum over the block's interfaces
// of t_w x_u, walked upstream as (unknown, product of the t's) pairs until
// past the error's most upstream block.
bool DcCascade::value(std::size_t error, int unknown, double& out) const {
  out = 0;
  const int last = error_last_block_[error];
  if (last < 0) return true;
  walk_.clear();
  walk_.push_back({unknown, 1.0});
  std::size_t steps = 0;
  while (!walk_.empty()) {
    if (++steps > kMostWalked) return false;
    const auto [col, factor] = walk_.back();
    walk_.pop_back();
    const int b = form_.col_block[static_cast<std::size_t>(col)];
    const int local = form_.col_local[static_cast<std::size_t>(col)];
    out += factor * local_value(error, b, local);
    if (last <= b) continue;  // nothing of the error upstream of here
    const Block& block = blocks_[static_cast<std::size_t>(b)];
    for (int i = block.interfaces_begin; i < block.interfaces_end; ++i) {
      const Interface& in = interfaces_[static_cast<std::size_t>(i)];
      const double t = t_[static_cast<std::size_t>(in.t_at + local)];
      if (t != 0) walk_.push_back({in.unknown, factor * t});
    }
  }
  return true;
}

}  // namespace tacet
