// pairwise-clusterer: a small outside engine for jetlag, in C++17 with the official protobuf
// runtime. It reads jetlag's event stream on stdin and writes a jets stream on stdout
// (proto/README.md, "A program as an engine"):
//
//   stdin   FileHeader (events, grid, settings), then one EventRecord per event
//   stdout  FileHeader (jets, same grid and settings), then one JetsRecord per event, flushed
//
// The clustering is a plain generalised kt written for this example, O(N^2) per event: every
// jet i keeps its neighbour, the jet j with the smallest (w_i * dR2_ij) / R^2 (ties to the
// smaller index); the smallest pair measure min(w_i, w_j) * dR2 / R^2 of all is found at the
// neighbour of the jet with the smaller weight (the nearest-neighbour idea of Cacciari and
// Salam, arXiv:hep-ph/0512210, with the measure in place of dR2 so that two distances that
// round to the same measure are ordered as jetlag's clustering specification orders them).
// It is checked against jetlag's reference in tolerance mode.
// Its own clock (steady_clock) runs around the clustering only, not around reading and
// writing, and goes into cluster_time_ns.

#include <algorithm>
#include <cerrno>
#include <chrono>
#include <cmath>
#include <cstdint>
#include <iostream>
#include <limits>
#include <string>
#include <vector>

#include <unistd.h>

#include <google/protobuf/io/zero_copy_stream_impl.h>
#include <google/protobuf/util/delimited_message_util.h>

#include "jetlag.pb.h"

namespace {

constexpr double kTwoPi = 2 * M_PI;
constexpr int kStreamBlockBytes = 1 << 16;

struct Settings {
  double p = -1;
  double radius = 0.4;
  double ptMin = 0;
  double threshold = 0;
  bool winnerTakeAll = false;
};

// one jet of the clustering: a tower at first, later a merge
struct ClusterCandidate {
  double px, py, pz, e;
  double y, phi, kt2;
  double weight;               // w = kt2^p
  std::vector<int32_t> towers; // flat tower indices of the constituents
};

double weightOf(double kt2, double p) {
  if (p == -1) return 1 / kt2;
  if (p == 0) return 1;
  if (p == 1) return kt2;
  return std::pow(kt2, p);
}

double deltaR2(const ClusterCandidate& a, const ClusterCandidate& b) {
  double dphi = std::fabs(a.phi - b.phi);
  if (dphi > M_PI) dphi = kTwoPi - dphi;
  const double dy = a.y - b.y;
  return dy * dy + dphi * dphi;
}

ClusterCandidate combine(const ClusterCandidate& a, const ClusterCandidate& b, const Settings& settings) {
  ClusterCandidate out;
  if (settings.winnerTakeAll) {
    const ClusterCandidate& harder = a.kt2 >= b.kt2 ? a : b;
    const double pt = std::sqrt(a.kt2) + std::sqrt(b.kt2);
    out.y = harder.y;
    out.phi = harder.phi;
    out.kt2 = pt * pt;
    out.px = pt * std::cos(out.phi);
    out.py = pt * std::sin(out.phi);
    out.pz = pt * std::sinh(out.y);
    out.e = pt * std::cosh(out.y);
  } else {
    out.px = a.px + b.px;
    out.py = a.py + b.py;
    out.pz = a.pz + b.pz;
    out.e = a.e + b.e;
    out.kt2 = out.px * out.px + out.py * out.py;
    out.y = 0.5 * std::log((out.e + out.pz) / (out.e - out.pz));
    out.phi = std::atan2(out.py, out.px);
    if (out.phi < 0) out.phi += kTwoPi;
    if (out.phi >= kTwoPi) out.phi -= kTwoPi;
  }
  out.weight = weightOf(out.kt2, settings.p);
  out.towers = a.towers;
  out.towers.insert(out.towers.end(), b.towers.begin(), b.towers.end());
  return out;
}

// Clusters one event's towers into final jets, in decreasing pt, jets below ptMin left out.
std::vector<ClusterCandidate> clusterEvent(const jetlag::EventRecord& event, const jetlag::Grid& grid, const Settings& settings) {
  const int towers = event.tower_index_size();
  const double etaStep = (grid.eta_max() - grid.eta_min()) / grid.eta_bins();
  const double phiStep = kTwoPi / grid.phi_bins();
  // jets are numbered in increasing tower index (spec section 4), which decides equal
  // measures: jetlag sends its towers in that order, a plain event file may not
  std::vector<int> order(towers);
  for (int k = 0; k < towers; k++) order[k] = k;
  std::sort(order.begin(), order.end(), [&](int a, int b) { return event.tower_index(a) < event.tower_index(b); });
  std::vector<ClusterCandidate> jets;
  jets.reserve(2 * towers);
  for (int k : order) {
    const int32_t index = event.tower_index(k);
    const double et = event.tower_et(k);
    // jetlag sends only towers above the threshold; a plain event file may hold others
    if (!(et > settings.threshold && et >= 1e-150)) continue;
    const double eta = grid.eta_min() + (index / grid.phi_bins() + 0.5) * etaStep;
    const double phi = (index % grid.phi_bins() + 0.5) * phiStep;
    ClusterCandidate tower{et * std::cos(phi), et * std::sin(phi), et * std::sinh(eta), et * std::cosh(eta), eta, phi, et * et, 0, {index}};
    tower.weight = weightOf(tower.kt2, settings.p);
    jets.push_back(std::move(tower));
  }

  const double invR2 = 1 / (settings.radius * settings.radius);
  std::vector<int> live(jets.size());
  for (size_t k = 0; k < jets.size(); k++) live[k] = static_cast<int>(k);
  // live stays in increasing jet index (a merge makes the largest), so the first of equal
  // measures met in a scan is the one with the smaller indices
  std::vector<int> nearest(2 * towers, -1);
  std::vector<double> nearestMeasure(2 * towers, INFINITY);
  auto pairMeasure = [&](int i, int j) { return (jets[i].weight * deltaR2(jets[i], jets[j])) * invR2; };
  auto findNearest = [&](int i) {
    nearest[i] = -1;
    nearestMeasure[i] = INFINITY;
    for (int j : live) {
      if (j == i) continue;
      const double measure = pairMeasure(i, j);
      if (measure < nearestMeasure[i]) { nearestMeasure[i] = measure; nearest[i] = j; }
    }
  };
  for (int i : live) findNearest(i);

  // jet i's candidate: the pair with its neighbour or, when that is larger, the beam; ordered
  // by measure, then the smaller index, then the larger, the beam after every jet
  constexpr int kBeam = std::numeric_limits<int>::max();
  struct Candidate { double measure; int low, high; };
  auto candidateOf = [&](int i) {
    const int j = nearest[i];
    if (j >= 0 && nearestMeasure[i] <= jets[i].weight) return Candidate{nearestMeasure[i], std::min(i, j), std::max(i, j)};
    return Candidate{jets[i].weight, i, kBeam};
  };
  auto before = [](const Candidate& a, const Candidate& b) {
    if (a.measure != b.measure) return a.measure < b.measure;
    if (a.low != b.low) return a.low < b.low;
    return a.high < b.high;
  };
  std::vector<ClusterCandidate> finals;
  while (!live.empty()) {
    size_t best = 0;
    Candidate bestCandidate = candidateOf(live[0]);
    for (size_t k = 1; k < live.size(); k++) {
      const Candidate candidate = candidateOf(live[k]);
      if (before(candidate, bestCandidate)) { bestCandidate = candidate; best = k; }
    }
    const int i = live[best];
    const int j = bestCandidate.high == kBeam ? -1 : nearest[i];
    live.erase(live.begin() + best);
    if (j < 0) {
      finals.push_back(jets[i]);
      for (int k : live) {
        if (nearest[k] == i) findNearest(k);
      }
    } else {
      live.erase(std::find(live.begin(), live.end(), j));
      jets.push_back(combine(jets[i], jets[j], settings));
      const int merged = static_cast<int>(jets.size()) - 1;
      live.push_back(merged);
      findNearest(merged);
      for (int k : live) {
        if (k == merged) continue;
        if (nearest[k] == i || nearest[k] == j) {
          findNearest(k);
        } else {
          // on equal measures the older neighbour has the smaller index and stays
          const double measure = pairMeasure(k, merged);
          if (measure < nearestMeasure[k]) { nearestMeasure[k] = measure; nearest[k] = merged; }
        }
      }
    }
  }

  std::vector<ClusterCandidate> out;
  for (auto& jet : finals) {
    if (std::sqrt(jet.kt2) >= settings.ptMin) out.push_back(std::move(jet));
  }
  std::stable_sort(out.begin(), out.end(), [](const ClusterCandidate& a, const ClusterCandidate& b) { return a.kt2 > b.kt2; });
  return out;
}

// The answer's fields from the jets; each jet's constituents are sorted in place (the jets are
// not used after) and copied in one go, outside the program's clock but inside the round trip.
void fillRecord(jetlag::JetsRecord& record, std::vector<ClusterCandidate>& jets) {
  const int count = static_cast<int>(jets.size());
  for (auto* field : {record.mutable_px(), record.mutable_py(), record.mutable_pz(), record.mutable_e(), record.mutable_pt(), record.mutable_y(), record.mutable_phi(), record.mutable_mass()}) {
    field->Reserve(count);
  }
  record.mutable_constituent_count()->Reserve(count);
  int constituents = 0;
  for (const ClusterCandidate& jet : jets) constituents += static_cast<int>(jet.towers.size());
  record.mutable_constituent_towers()->Reserve(constituents);
  for (ClusterCandidate& jet : jets) {
    const double pt = std::sqrt(jet.kt2);
    record.add_px(jet.px);
    record.add_py(jet.py);
    record.add_pz(jet.pz);
    record.add_e(jet.e);
    record.add_pt(pt);
    record.add_y(jet.y);
    record.add_phi(jet.phi);
    record.add_mass(std::sqrt(std::max(0.0, jet.e * jet.e - jet.px * jet.px - jet.py * jet.py - jet.pz * jet.pz)));
    record.add_constituent_count(static_cast<uint32_t>(jet.towers.size()));
    std::sort(jet.towers.begin(), jet.towers.end());
    record.mutable_constituent_towers()->Add(jet.towers.begin(), jet.towers.end());
  }
}

// Writes one delimited record to stdout in one write() where the pipe takes it whole: the
// runtime's FileOutputStream hands a large record over in 8 KB pieces, each a wake-up of
// jetlag's reader. `bytes` is reused from record to record.
bool writeDelimited(const google::protobuf::MessageLite& message, std::string& bytes) {
  bytes.clear();
  {
    google::protobuf::io::StringOutputStream sink(&bytes);
    if (!google::protobuf::util::SerializeDelimitedToZeroCopyStream(message, &sink)) return false;
  }
  size_t written = 0;
  while (written < bytes.size()) {
    const ssize_t count = ::write(1, bytes.data() + written, bytes.size() - written);
    if (count < 0 && errno == EINTR) continue;
    if (count <= 0) return false;
    written += static_cast<size_t>(count);
  }
  return true;
}

}  // namespace

int main() {
  GOOGLE_PROTOBUF_VERIFY_VERSION;
  // a block as large as a pipe's buffer: one read() takes a whole event
  google::protobuf::io::FileInputStream input(0, kStreamBlockBytes);
  using google::protobuf::util::ParseDelimitedFromZeroCopyStream;

  jetlag::FileHeader header;
  bool cleanEnd = false;
  if (!ParseDelimitedFromZeroCopyStream(&header, &input, &cleanEnd) || header.signature() != "jetlag" || header.kind() != jetlag::FILE_KIND_EVENTS) {
    std::cerr << "pairwise-clusterer: stdin does not start with a jetlag event stream header\n";
    return 2;
  }
  Settings settings;
  if (header.has_settings()) {
    settings.p = header.settings().p();
    settings.radius = header.settings().radius();
    settings.ptMin = header.settings().pt_min();
    settings.threshold = header.settings().threshold();
    settings.winnerTakeAll = header.settings().recombination() == jetlag::RECOMBINATION_WINNER_TAKE_ALL;
  }

  jetlag::FileHeader reply;
  reply.set_signature("jetlag");
  reply.set_format_version(1);
  reply.set_kind(jetlag::FILE_KIND_JETS);
  *reply.mutable_grid() = header.grid();
  reply.set_producer("pairwise-clusterer (jetlag's C++ example engine)");
  // the settings the jets are made with: jetlag's, or the defaults for a plain event file
  jetlag::ClusterSettings* used = reply.mutable_settings();
  used->set_p(settings.p);
  used->set_radius(settings.radius);
  used->set_pt_min(settings.ptMin);
  used->set_threshold(settings.threshold);
  used->set_recombination(settings.winnerTakeAll ? jetlag::RECOMBINATION_WINNER_TAKE_ALL : jetlag::RECOMBINATION_E_SCHEME);
  used->set_engine("pairwise-clusterer-cpp");
  std::string answer;
  if (!writeDelimited(reply, answer)) return 1;

  jetlag::EventRecord event;
  jetlag::JetsRecord record;
  while (true) {
    // the parser merges into the message it is given: start each event from an empty one
    event.Clear();
    if (!ParseDelimitedFromZeroCopyStream(&event, &input, &cleanEnd)) break;
    record.Clear();
    record.set_event(event.event());
    if (event.deposit_et_size() > 0 || event.tower_index_size() != event.tower_et_size()) {
      record.set_error("expected towers only, as many tower_et as tower_index");
    } else {
      const auto started = std::chrono::steady_clock::now();
      std::vector<ClusterCandidate> jets = clusterEvent(event, header.grid(), settings);
      const auto clusterTimeNs = std::chrono::duration_cast<std::chrono::nanoseconds>(std::chrono::steady_clock::now() - started).count();
      fillRecord(record, jets);
      record.set_cluster_time_ns(static_cast<uint64_t>(clusterTimeNs));
    }
    // one answer per event, now: jetlag waits for it
    if (!writeDelimited(record, answer)) return 1;
  }
  if (!cleanEnd) {
    std::cerr << "pairwise-clusterer: the event stream ends inside a record\n";
    return 2;
  }
  return 0;
}
