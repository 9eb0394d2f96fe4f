// Over 300 lines on purpose: one written-down layout, the comment below and the region offsets it describes, kept together.
// Memory layout of one engine instance: the one written description of it (assembly/README.md
// and host/clustering/engine.ts point here). Every region is reserved once by setup(), sized for
// the largest event the grid allows (all C = etaBins * phiBins towers occupied) and for the
// host's batch capacity; nothing is allocated per event, and memory never grows after
// configureEngine(). Regions are 16-byte aligned, in this order (reserve(), reservePadding()):
//
//   tables   etaCentre sinhEta coshEta f64[etaBins]   phiCentre cosPhi sinPhi f64[phiBins]
//            (written once by the host: host/clustering/grid.ts makeGridTables)
//   input    inIndex i32[IN]  inEt f64[IN]  inStart i32[EV+1]          (written by the host per call)
//   output   outJetStart i32[EV+1]  outNs f64[EV]  outClustered i32[EV]  outStatus i32[EV]
//            outPx outPy outPz outE outPt outY outPhi outMass f64[IN]
//            outTowerCount outTowerStart outTowers i32[IN]               (read by the host per call)
//            outJetIndex i32[IN]   (each output jet's index in the sequence, spec section 4)
//   event    evIndex i32[C]  evEt f64[C]  sortIndex i32[C]  sortEt f64[C]  radixCount i32[RADIX_BUCKETS]
//   cells    cellY cellPhi cellW cellNnDR2 cellNnKey f64[C]
//            cellJet cellNn pointHead pointNext pointPrev i32[C]
//            candTie u64[P]  (per slot: the candidate's tie word, tournament.ts)
//            cellSlot slotCell cellWide cellRow cellCol i32[C]
//            driftList driftSlot i32[C]   (the cells whose jet lies outside its cell's own area)
//   rows     rowDriftY rowDriftPhi f64[etaBins]
//   tree     tree i32[2P]  nodeValue u64[2P]   (P = power of two >= C; per event a tree of
//            L <= P leaves, L the power of two >= its towers: node n < L holds the winning slot of
//            its subtree and its measure's bits, tree[L + s] = s and nodeValue[L + s] slot s's)
//   jets     jetPx jetPy jetPz jetE jetKt2 jetY jetPhi f64[2C]  jetInto jetLabel i32[2C]
//   finals   finalJet finalOrder finalScratch i32[C]  finalPt f64[C]  redo i32[C]
//   grooming (grooming.ts; each "event" of a grooming call is one jet's constituents)
//            groomJetPt f64[EV]   (each jet's reported pt, written by the host)
//            groomPx groomPy groomPz groomE groomPt groomY groomPhi groomMass f64[EV]
//            groomTowers groomSubjets i32[EV]  groomZ groomDeltaR f64[EV]   (read by the host)
//            nodeTowers nodeParentA nodeParentB i32[2C]   (per jet of one re-clustering: its
//            towers, and the two jets a merge made it from, -1 for a tower)
//            (groom-pairs.ts, per jet of one re-clustering:) jetNn jetSlot jetPlace pointedHead
//            pointedNext pointedPrev i32[2C]  jetNnDR2 f64[2C]
//            (per slot:) slotJet i32[C]  (the live jets' table, by position:) liveJet i32[C]
//            liveY livePhi f64[C]
//   offsets  offDr offDc i32[O]  offDist f64[O]  offPerm offScratch offTmpI i32[O]  offTmpF f64[O]
//            offStep i32[O]   (O = OFFSET_LIMIT; offPerm, offScratch, offTmpI, offTmpF only while
//            the offsets are sorted, offsets.ts)
//   padded   (reserved by configureEngine once the offsets fix how far searches reach)
//            padY padPhi f64[Q]  padCell i32[Q]  cellPad cellCopyStep i32[C]
//            padBits u64[(etaBins + 2 * padRows) * padRowBytes / 8]  bitStep i32[58 * 64]
//
// The padded rows hold the cells' y and phi again, in rows of padStride = phiBins + 2 * padCols
// with padRows empty rows above and below and each row's first and last padCols cells copied past
// its other end, so that every search offset from every cell is one flat step (offStep) with no
// bounds or seam test; Q = (etaBins + 2 * padRows) * padStride. padCell: the real cell of a padded
// one (-1 in the empty rows), cellPad the inverse, cellCopyStep: from a cell's padded cell to its
// copy (+-phiBins, 0: none). padBits: bit k of padded row r set while padded cell (r, k) holds a
// jet, padRowBytes per row with 8 spare bytes, so that any run of up to 57 columns is one
// unaligned load. bitStep[width * 64 + k] = (k / width) * padStride + k % width: bit k of several
// rows' runs of `width` columns packed into one word, as a padded step.
//
// IN is the batch tower capacity, EV the batch event capacity. Cell c = ieta * phiBins + iphi;
// an empty cell has cellY = +Infinity and cellJet = -1.

// @ts-ignore: decorator
@inline export const OFFSET_LIMIT: i32 = 1 << 16;
// @ts-ignore: decorator
@inline export const RADIX_BUCKETS: i32 = 2048;

export let etaBins: i32 = 0;
export let phiBins: i32 = 0;
export let cellTotal: i32 = 0;
export let treeLeaves: i32 = 0;
export let batchTowers: i32 = 0;
export let batchEvents: i32 = 0;

export let etaCentre: usize = 0;
export let sinhEta: usize = 0;
export let coshEta: usize = 0;
export let phiCentre: usize = 0;
export let cosPhi: usize = 0;
export let sinPhi: usize = 0;

export let inIndex: usize = 0;
export let inEt: usize = 0;
export let inStart: usize = 0;

export let outJetStart: usize = 0;
export let outNs: usize = 0;
export let outClustered: usize = 0;
export let outStatus: usize = 0;
export let outPx: usize = 0;
export let outPy: usize = 0;
export let outPz: usize = 0;
export let outE: usize = 0;
export let outPt: usize = 0;
export let outY: usize = 0;
export let outPhi: usize = 0;
export let outMass: usize = 0;
export let outTowerCount: usize = 0;
export let outTowerStart: usize = 0;
export let outTowers: usize = 0;
export let outJetIndex: usize = 0;

export let evIndex: usize = 0;
export let evEt: usize = 0;
export let sortIndex: usize = 0;
export let sortEt: usize = 0;
export let radixCount: usize = 0;

export let cellY: usize = 0;
export let cellPhi: usize = 0;
export let cellW: usize = 0;
export let cellNnDR2: usize = 0;
export let cellNnKey: usize = 0;
export let cellJet: usize = 0;
export let cellNn: usize = 0;
export let pointHead: usize = 0;
export let pointNext: usize = 0;
export let pointPrev: usize = 0;
export let candTie: usize = 0;
export let cellSlot: usize = 0;
export let slotCell: usize = 0;
export let cellWide: usize = 0;
export let cellRow: usize = 0;
export let cellCol: usize = 0;
export let driftList: usize = 0;
export let driftSlot: usize = 0;

export let tree: usize = 0;
export let nodeValue: usize = 0;
export let rowDriftY: usize = 0;
export let rowDriftPhi: usize = 0;

export let jetPx: usize = 0;
export let jetPy: usize = 0;
export let jetPz: usize = 0;
export let jetE: usize = 0;
export let jetKt2: usize = 0;
export let jetY: usize = 0;
export let jetPhi: usize = 0;
export let jetInto: usize = 0;
export let jetLabel: usize = 0;

export let finalJet: usize = 0;
export let finalOrder: usize = 0;
export let finalScratch: usize = 0;
export let finalPt: usize = 0;
export let redo: usize = 0;

export let groomJetPt: usize = 0;
export let groomPx: usize = 0;
export let groomPy: usize = 0;
export let groomPz: usize = 0;
export let groomE: usize = 0;
export let groomPt: usize = 0;
export let groomY: usize = 0;
export let groomPhi: usize = 0;
export let groomMass: usize = 0;
export let groomTowers: usize = 0;
export let groomSubjets: usize = 0;
export let groomZ: usize = 0;
export let groomDeltaR: usize = 0;
export let nodeTowers: usize = 0;
export let nodeParentA: usize = 0;
export let nodeParentB: usize = 0;
export let jetNn: usize = 0;
export let jetSlot: usize = 0;
export let jetNnDR2: usize = 0;
export let slotJet: usize = 0;
export let liveJet: usize = 0;
export let liveY: usize = 0;
export let livePhi: usize = 0;
export let jetPlace: usize = 0;
export let pointedHead: usize = 0;
export let pointedNext: usize = 0;
export let pointedPrev: usize = 0;

export let offDr: usize = 0;
export let offDc: usize = 0;
export let offDist: usize = 0;
export let offPerm: usize = 0;
export let offScratch: usize = 0;
export let offTmpI: usize = 0;
export let offTmpF: usize = 0;
export let offStep: usize = 0;

export let padRows: i32 = 0;
export let padCols: i32 = 0;
export let padStride: i32 = 0;
export let padTotal: i32 = 0;
export let padY: usize = 0;
export let padPhi: usize = 0;
export let padCell: usize = 0;
export let cellPad: usize = 0;
export let cellCopyStep: usize = 0;
export let padBits: usize = 0;
export let padRowBytes: i32 = 0;
export let bitStep: usize = 0;

// @ts-ignore: decorator
@inline export function getF64(base: usize, i: i32): f64 { return load<f64>(base + (<usize>i << 3)); }
// @ts-ignore: decorator
@inline export function setF64(base: usize, i: i32, v: f64): void { store<f64>(base + (<usize>i << 3), v); }
// @ts-ignore: decorator
@inline export function getI32(base: usize, i: i32): i32 { return load<i32>(base + (<usize>i << 2)); }
// @ts-ignore: decorator
@inline export function setI32(base: usize, i: i32, v: i32): void { store<i32>(base + (<usize>i << 2), v); }

let cursor: usize = 0;
/** where the padded regions start (the end of reserve()'s regions) */
let paddedStart: usize = 0;

function take(bytes: usize): usize {
  const at = cursor;
  cursor = (cursor + bytes + 15) & ~<usize>15;
  return at;
}

/** Lays out every region; returns false when memory cannot grow that far. Called once. */
export function reserve(etaCount: i32, phiCount: i32, towerCapacity: i32, eventCapacity: i32): bool {
  etaBins = etaCount;
  phiBins = phiCount;
  const c = etaCount * phiCount;
  cellTotal = c;
  let p = 1;
  while (p < c) p <<= 1;
  treeLeaves = p;
  batchTowers = towerCapacity;
  batchEvents = eventCapacity;
  const inCap = <usize>towerCapacity;
  const evCap = <usize>eventCapacity;
  const cells = <usize>c;
  const jets = cells << 1;
  cursor = (__heap_base + 15) & ~<usize>15;

  etaCentre = take(<usize>etaCount << 3);
  sinhEta = take(<usize>etaCount << 3);
  coshEta = take(<usize>etaCount << 3);
  phiCentre = take(<usize>phiCount << 3);
  cosPhi = take(<usize>phiCount << 3);
  sinPhi = take(<usize>phiCount << 3);

  inIndex = take(inCap << 2);
  inEt = take(inCap << 3);
  inStart = take((evCap + 1) << 2);

  outJetStart = take((evCap + 1) << 2);
  outNs = take(evCap << 3);
  outClustered = take(evCap << 2);
  outStatus = take(evCap << 2);
  outPx = take(inCap << 3);
  outPy = take(inCap << 3);
  outPz = take(inCap << 3);
  outE = take(inCap << 3);
  outPt = take(inCap << 3);
  outY = take(inCap << 3);
  outPhi = take(inCap << 3);
  outMass = take(inCap << 3);
  outTowerCount = take(inCap << 2);
  outTowerStart = take(inCap << 2);
  outTowers = take(inCap << 2);
  outJetIndex = take(inCap << 2);

  evIndex = take(cells << 2);
  evEt = take(cells << 3);
  sortIndex = take(cells << 2);
  sortEt = take(cells << 3);
  radixCount = take(<usize>RADIX_BUCKETS << 2);

  cellY = take(cells << 3);
  cellPhi = take(cells << 3);
  cellW = take(cells << 3);
  cellNnDR2 = take(cells << 3);
  cellNnKey = take(cells << 3);
  cellJet = take(cells << 2);
  cellNn = take(cells << 2);
  pointHead = take(cells << 2);
  pointNext = take(cells << 2);
  pointPrev = take(cells << 2);
  candTie = take(<usize>p << 3);
  cellSlot = take(cells << 2);
  slotCell = take(cells << 2);
  cellWide = take(cells << 2);
  cellRow = take(cells << 2);
  cellCol = take(cells << 2);
  driftList = take(cells << 2);
  driftSlot = take(cells << 2);

  rowDriftY = take(<usize>etaCount << 3);
  rowDriftPhi = take(<usize>etaCount << 3);
  tree = take(<usize>p << 3); // 2P entries of i32
  nodeValue = take(<usize>p << 4);

  jetPx = take(jets << 3);
  jetPy = take(jets << 3);
  jetPz = take(jets << 3);
  jetE = take(jets << 3);
  jetKt2 = take(jets << 3);
  jetY = take(jets << 3);
  jetPhi = take(jets << 3);
  jetInto = take(jets << 2);
  jetLabel = take(jets << 2);

  finalJet = take(cells << 2);
  finalOrder = take(cells << 2);
  finalScratch = take(cells << 2);
  finalPt = take(cells << 3);
  redo = take(cells << 2);

  groomJetPt = take(evCap << 3);
  groomPx = take(evCap << 3);
  groomPy = take(evCap << 3);
  groomPz = take(evCap << 3);
  groomE = take(evCap << 3);
  groomPt = take(evCap << 3);
  groomY = take(evCap << 3);
  groomPhi = take(evCap << 3);
  groomMass = take(evCap << 3);
  groomTowers = take(evCap << 2);
  groomSubjets = take(evCap << 2);
  groomZ = take(evCap << 3);
  groomDeltaR = take(evCap << 3);
  nodeTowers = take(jets << 2);
  nodeParentA = take(jets << 2);
  nodeParentB = take(jets << 2);
  jetNn = take(jets << 2);
  jetSlot = take(jets << 2);
  jetNnDR2 = take(jets << 3);
  slotJet = take(cells << 2);
  liveJet = take(cells << 2);
  liveY = take(cells << 3);
  livePhi = take(cells << 3);
  jetPlace = take(jets << 2);
  pointedHead = take(jets << 2);
  pointedNext = take(jets << 2);
  pointedPrev = take(jets << 2);

  offDr = take(<usize>OFFSET_LIMIT << 2);
  offDc = take(<usize>OFFSET_LIMIT << 2);
  offDist = take(<usize>OFFSET_LIMIT << 3);
  offPerm = take(<usize>OFFSET_LIMIT << 2);
  offScratch = take(<usize>OFFSET_LIMIT << 2);
  offTmpI = take(<usize>OFFSET_LIMIT << 2);
  offTmpF = take(<usize>OFFSET_LIMIT << 3);
  offStep = take(<usize>OFFSET_LIMIT << 2);
  paddedStart = cursor;
  return growTo(cursor);
}

function growTo(end: usize): bool {
  const have = <usize>memory.size() << 16;
  if (end > have) {
    const pages = <i32>((end - have + 0xffff) >> 16);
    if (memory.grow(pages) < 0) return false;
  }
  return true;
}

/** Lays out the padded rows for offsets up to `rows` rows and `cols` columns away; false when
 * memory cannot grow that far. Called once per engine, by configureEngine(). */
export function reservePadding(rows: i32, cols: i32): bool {
  padRows = rows;
  padCols = cols;
  padStride = phiBins + 2 * cols;
  const total = <usize>(etaBins + 2 * rows) * <usize>padStride;
  if (total > 0x7fffffff >> 3) return false;
  padTotal = <i32>total;
  cursor = paddedStart;
  padY = take(total << 3);
  padPhi = take(total << 3);
  padCell = take(total << 2);
  cellPad = take(<usize>cellTotal << 2);
  cellCopyStep = take(<usize>cellTotal << 2);
  padRowBytes = (((padStride + 63) >> 6) << 3) + 8;
  padBits = take(<usize>(etaBins + 2 * rows) * <usize>padRowBytes);
  bitStep = take(58 * 64 * 4);
  return growTo(cursor);
}
