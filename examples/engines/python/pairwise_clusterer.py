#!/usr/bin/env python3
"""pairwise_clusterer: an outside engine for jetlag in plain Python with the protobuf package.

Reads jetlag's event stream on stdin and writes a jets stream on stdout (proto/README.md, "A
program as an engine"): a header each way, then one JetsRecord per EventRecord, flushed after
each. The clustering is the same plain O(N^2) generalised kt as the C++ example (every jet keeps its
neighbour by the pair measure; arXiv:hep-ph/0512210 for why that finds the smallest pair),
written for reading, not for speed: expect milliseconds to seconds per event where the engine
takes microseconds. cluster_time_ns is measured around the clustering only.

jetlag_pb2 comes from `make` (protoc --python_out into build/) or from PYTHONPATH.
"""

import math
import os
import sys
import time

sys.path.append(os.path.join(os.path.dirname(os.path.abspath(__file__)), 'build'))
import jetlag_pb2  # noqa: E402  (generated from proto/jetlag.proto)

TWO_PI = 2 * math.pi


def read_varint(stream):
    """The length in front of a record; None at a clean end of the stream."""
    value, shift = 0, 0
    while True:
        byte = stream.read(1)
        if not byte:
            if shift == 0:
                return None
            raise EOFError('the event stream ends inside a record length')
        value |= (byte[0] & 0x7F) << shift
        if byte[0] < 0x80:
            return value
        shift += 7


def read_record(stream, message_type):
    size = read_varint(stream)
    if size is None:
        return None
    body = stream.read(size)
    if len(body) != size:
        raise EOFError('the event stream ends inside a record')
    return message_type.FromString(body)


def write_record(stream, message):
    body = message.SerializeToString()
    size, prefix = len(body), bytearray()
    while size >= 0x80:
        prefix.append((size & 0x7F) | 0x80)
        size >>= 7
    prefix.append(size)
    stream.write(bytes(prefix) + body)
    # one answer per event, now: jetlag waits for it
    stream.flush()


def weight_of(kt2, p):
    if p == -1:
        return 1 / kt2
    if p == 0:
        return 1.0
    if p == 1:
        return kt2
    return kt2 ** p


def delta_r2(a, b):
    dphi = abs(a['phi'] - b['phi'])
    if dphi > math.pi:
        dphi = TWO_PI - dphi
    dy = a['y'] - b['y']
    return dy * dy + dphi * dphi


def combine(a, b, settings):
    if settings['wta']:
        harder = a if a['kt2'] >= b['kt2'] else b
        pt = math.sqrt(a['kt2']) + math.sqrt(b['kt2'])
        y, phi = harder['y'], harder['phi']
        jet = dict(px=pt * math.cos(phi), py=pt * math.sin(phi), pz=pt * math.sinh(y), e=pt * math.cosh(y), y=y, phi=phi, kt2=pt * pt)
    else:
        px, py, pz, e = a['px'] + b['px'], a['py'] + b['py'], a['pz'] + b['pz'], a['e'] + b['e']
        phi = math.atan2(py, px)
        if phi < 0:
            phi += TWO_PI
        if phi >= TWO_PI:
            phi -= TWO_PI
        jet = dict(px=px, py=py, pz=pz, e=e, y=0.5 * math.log((e + pz) / (e - pz)), phi=phi, kt2=px * px + py * py)
    jet['w'] = weight_of(jet['kt2'], settings['p'])
    jet['towers'] = a['towers'] + b['towers']
    return jet


def cluster_event(event, grid, settings):
    eta_step = (grid.eta_max - grid.eta_min) / grid.eta_bins
    phi_step = TWO_PI / grid.phi_bins
    jets = []
    # jets numbered in increasing tower index (spec section 4): it decides equal measures
    for index, et in sorted(zip(event.tower_index, event.tower_et)):
        if not (et > settings['threshold'] and et >= 1e-150):
            continue
        eta = grid.eta_min + (index // grid.phi_bins + 0.5) * eta_step
        phi = (index % grid.phi_bins + 0.5) * phi_step
        jets.append(dict(px=et * math.cos(phi), py=et * math.sin(phi), pz=et * math.sinh(eta), e=et * math.cosh(eta),
                         y=eta, phi=phi, kt2=et * et, w=weight_of(et * et, settings['p']), towers=[index]))
    inv_r2 = 1 / (settings['radius'] * settings['radius'])
    # live stays in increasing jet index (a merge makes the largest): the first of equal
    # measures met in a scan has the smaller indices
    live = list(range(len(jets)))
    nearest, nearest_measure = {}, {}

    def pair_measure(i, j):
        return (jets[i]['w'] * delta_r2(jets[i], jets[j])) * inv_r2

    def find_nearest(i):
        nearest[i], nearest_measure[i] = -1, math.inf
        for j in live:
            if j != i:
                measure = pair_measure(i, j)
                if measure < nearest_measure[i]:
                    nearest[i], nearest_measure[i] = j, measure

    def candidate(i):
        # (measure, smaller index, larger index); the beam ranks after every jet
        j = nearest[i]
        if j >= 0 and nearest_measure[i] <= jets[i]['w']:
            return (nearest_measure[i], min(i, j), max(i, j))
        return (jets[i]['w'], i, math.inf)

    for i in live:
        find_nearest(i)
    finals = []
    while live:
        best = min(range(len(live)), key=lambda k: candidate(live[k]))
        chosen = candidate(live[best])
        i = live.pop(best)
        j = -1 if chosen[2] == math.inf else nearest[i]
        if j < 0:
            finals.append(jets[i])
            for k in live:
                if nearest[k] == i:
                    find_nearest(k)
            continue
        live.remove(j)
        jets.append(combine(jets[i], jets[j], settings))
        merged = len(jets) - 1
        live.append(merged)
        find_nearest(merged)
        for k in live:
            if k == merged:
                continue
            if nearest[k] in (i, j):
                find_nearest(k)
            else:
                # on equal measures the older neighbour has the smaller index and stays
                measure = pair_measure(k, merged)
                if measure < nearest_measure[k]:
                    nearest[k], nearest_measure[k] = merged, measure
    kept = [jet for jet in finals if math.sqrt(jet['kt2']) >= settings['pt_min']]
    kept.sort(key=lambda jet: -jet['kt2'])
    return kept


def main():
    stdin, stdout = sys.stdin.buffer, sys.stdout.buffer
    header = read_record(stdin, jetlag_pb2.FileHeader)
    if header is None or header.signature != 'jetlag' or header.kind != jetlag_pb2.FILE_KIND_EVENTS:
        sys.stderr.write('pairwise_clusterer: stdin does not start with a jetlag event stream header\n')
        return 2
    given = header.settings if header.HasField('settings') else None
    settings = dict(p=given.p if given else -1.0, radius=given.radius if given else 0.4, pt_min=given.pt_min if given else 0.0,
                    threshold=given.threshold if given else 0.0,
                    wta=bool(given) and given.recombination == jetlag_pb2.RECOMBINATION_WINNER_TAKE_ALL)
    reply = jetlag_pb2.FileHeader(signature='jetlag', format_version=1, kind=jetlag_pb2.FILE_KIND_JETS, grid=header.grid,
                                  producer="pairwise_clusterer (jetlag's Python example engine)")
    reply.settings.p, reply.settings.radius, reply.settings.pt_min = settings['p'], settings['radius'], settings['pt_min']
    reply.settings.threshold = settings['threshold']
    reply.settings.recombination = jetlag_pb2.RECOMBINATION_WINNER_TAKE_ALL if settings['wta'] else jetlag_pb2.RECOMBINATION_E_SCHEME
    reply.settings.engine = 'pairwise-clusterer-python'
    write_record(stdout, reply)

    while True:
        event = read_record(stdin, jetlag_pb2.EventRecord)
        if event is None:
            return 0
        record = jetlag_pb2.JetsRecord(event=event.event)
        if len(event.deposit_et) > 0 or len(event.tower_index) != len(event.tower_et):
            record.error = 'expected towers only, as many tower_et as tower_index'
        else:
            started = time.perf_counter_ns()
            jets = cluster_event(event, header.grid, settings)
            record.cluster_time_ns = time.perf_counter_ns() - started
            for jet in jets:
                pt = math.sqrt(jet['kt2'])
                record.px.append(jet['px'])
                record.py.append(jet['py'])
                record.pz.append(jet['pz'])
                record.e.append(jet['e'])
                record.pt.append(pt)
                record.y.append(jet['y'])
                record.phi.append(jet['phi'])
                record.mass.append(math.sqrt(max(0.0, jet['e'] ** 2 - jet['px'] ** 2 - jet['py'] ** 2 - jet['pz'] ** 2)))
                record.constituent_count.append(len(jet['towers']))
                record.constituent_towers.extend(sorted(jet['towers']))
        write_record(stdout, record)


if __name__ == '__main__':
    sys.exit(main())
