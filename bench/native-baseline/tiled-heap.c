/*
 * A plain native build of the tiled nearest-neighbour generalised-kt method
 * (arXiv:hep-ph/0512210), as the yardstick for the engine's speed: R-wide tiles, exact
 * neighbours under the key of clustering-spec.md section 4, an indexed binary heap. It is not
 * part of jetlag (no product code or test uses it); bench/native-pair.bench.ts builds it with
 * gcc and times it against the engine, batch for batch, on the same invented events.
 *
 *   gcc -O3 -march=native -o tiled-heap tiled-heap.c -lm
 *   ./tiled-heap check FILE p   prints "event pt y phi towerCount" per final jet
 *   ./tiled-heap serve FILE p   stdin: "run FIRST COUNT ROUNDS" -> median over rounds of the
 *                               mean ns per event; "quit" ends
 *   FILE: u32 eventCount, then per event u32 n, i32 flatIndex[n], f64 et[n] (little endian)
 *
 * Default grid and R = 0.4 only. log, atan2, sin, cos, sinh and cosh are the C library's, not
 * V8's, so jets agree with the engine's only to the last bits (for p = 0 and 1 on a grid, exact
 * distance ties then flip some later choices); for timing that does not matter.
 *
 * Method: the (y, phi) plane is cut into tiles a little wider than R (phi wraps around; for the
 * default grid: 12 rows of 0.4167 in y times 15 columns of 0.4189 in phi); every tile keeps an
 * array of its live jets (removal swaps in the last one). Each jet keeps its nearest neighbour
 * under the exact key ((w_i * dR2) * invR2, min(i,j), max(i,j)), searched in its own tile and the
 * 8 around it (pairs with dR2 > R*R*(1+1e-9) are ignored). Its candidate is the smaller of its
 * beam (w_i, i, BEAM) and its pair (d_{i,nn}, min, max); an indexed binary min-heap over the
 * candidates gives the next step. After a step, the jets in the 9 tiles around the merged jets
 * whose neighbour was one of them search again; the jets around the new jet take it when
 * strictly nearer by their own key.
 */
#define _POSIX_C_SOURCE 200809L
/* the spec fixes every rounding: no fused multiply-add contraction (gcc contracts by default) */
#pragma GCC optimize("fp-contract=off")
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#define PI_VALUE 3.141592653589793   /* the double nearest pi, as Math.PI */

#define jetLog log
#define jetAtan2 atan2

/* ---------------------------------------------------------------- grid and settings */
enum { ETA_BINS = 50, PHI_BINS = 64, GRID_TOWERS = ETA_BINS * PHI_BINS };
static const double ETA_MIN = -2.5, ETA_MAX = 2.5;
static const double RADIUS = 0.4;

#define MAX_JETS (2 * GRID_TOWERS)    /* N towers + at most N-1 merged jets */
#define NO_JET (-1)
#define BEAM_INDEX 0x7fffffff         /* larger than every jet index */

static double rowEta[ETA_BINS], rowSinh[ETA_BINS], rowCosh[ETA_BINS];
static double colPhi[PHI_BINS], colCos[PHI_BINS], colSin[PHI_BINS];

static double exponentP;   /* p of the generalised kt */
static double invR2;       /* 1 / (R * R) */
static double reachR2;     /* R * R * (1 + 1e-9): farther pairs always lose to a beam */

/* ---------------------------------------------------------------- tiles */
#define MAX_TILES 4096
static int tileRows, tileCols, tileCount;
static double tileYMin, invTileHeight, invTileWidth;
static int *tileJets;                       /* tile t's live jets: tileJets[t * GRID_TOWERS + k] */
static int tileSize[MAX_TILES];             /* number of live jets in the tile */
static int tileAround[MAX_TILES][9];        /* the tile itself and its neighbours */
static int tileAroundCount[MAX_TILES];
static int tileForward[MAX_TILES][4];       /* half of the neighbours: each tile pair once */
static int tileForwardCount[MAX_TILES];
static int tileMark[MAX_TILES];             /* visit stamp to merge neighbourhoods */
static int tileStamp;

/* ---------------------------------------------------------------- jets */
/* what the neighbour search touches, one record (64 bytes) per jet */
typedef struct {
    double y, phi, weight;
    double nnKey;            /* (w_i * dR2) * invR2 to nn(i), +inf if none */
    double nnDR2;            /* dR2 to nn(i) */
    int nn;                  /* NO_JET if no jet within reach */
    int slot;                /* position in its tile's array */
    int tile;
    int pad[3];              /* to 64 bytes */
} SearchJet;

/* what only recombination and output touch */
typedef struct {
    double px, py, pz, e, kt2;
    int towers;
    int pad;
} JetMomentum;

static SearchJet jet[MAX_JETS];
static JetMomentum mom[MAX_JETS];

/* ---------------------------------------------------------------- indexed min-heap of candidates */
/* candidate of a jet: (measure, lower, upper) in the order of spec section 4 step 1 */
typedef struct {
    double measure;
    int lower, upper;
    int owner;               /* the jet whose candidate this is */
} Candidate;

static Candidate heap[MAX_JETS];
static int heapPos[MAX_JETS];
static int heapSize;

static inline int candidateLess(const Candidate *x, const Candidate *y)
{
    if (x->measure != y->measure) return x->measure < y->measure;
    if (x->lower != y->lower) return x->lower < y->lower;
    return x->upper < y->upper;
}

static void heapSiftUp(int pos)
{
    Candidate c = heap[pos];
    while (pos > 0) {
        int parent = (pos - 1) >> 1;
        if (!candidateLess(&c, &heap[parent])) break;
        heap[pos] = heap[parent];
        heapPos[heap[pos].owner] = pos;
        pos = parent;
    }
    heap[pos] = c;
    heapPos[c.owner] = pos;
}

static void heapSiftDown(int pos)
{
    Candidate c = heap[pos];
    for (;;) {
        int child = 2 * pos + 1;
        if (child >= heapSize) break;
        if (child + 1 < heapSize && candidateLess(&heap[child + 1], &heap[child])) child++;
        if (!candidateLess(&heap[child], &c)) break;
        heap[pos] = heap[child];
        heapPos[heap[pos].owner] = pos;
        pos = child;
    }
    heap[pos] = c;
    heapPos[c.owner] = pos;
}

/* put entry pos back in order after its key changed */
static inline void heapRestore(int pos)
{
    if (pos > 0 && candidateLess(&heap[pos], &heap[(pos - 1) >> 1])) heapSiftUp(pos);
    else heapSiftDown(pos);
}

static void heapRemove(int owner)
{
    int pos = heapPos[owner];
    heapSize--;
    if (pos == heapSize) return;
    heap[pos] = heap[heapSize];
    heapPos[heap[pos].owner] = pos;
    heapRestore(pos);
}

/* ---------------------------------------------------------------- geometry */
static inline double pairDR2(const SearchJet *a, const SearchJet *b)
{
    double dphi = fabs(a->phi - b->phi);
    if (dphi > PI_VALUE) dphi = 2 * PI_VALUE - dphi;
    double dy = a->y - b->y;
    return dy * dy + dphi * dphi;
}

static inline double weightOf(double kt2)
{
    if (exponentP == -1.0) return 1.0 / kt2;
    if (exponentP == 0.0) return 1.0;
    if (exponentP == 1.0) return kt2;
    return pow(kt2, exponentP);
}

static inline int tileOf(double y, double phi)
{
    int row = (int)floor((y - tileYMin) * invTileHeight);
    int col = (int)floor(phi * invTileWidth);
    if (row < 0) row = 0;
    if (row >= tileRows) row = tileRows - 1;
    if (col < 0) col = 0;
    if (col >= tileCols) col = tileCols - 1;
    return row * tileCols + col;
}

static inline void tileInsert(int i)
{
    SearchJet *J = &jet[i];
    int t = tileOf(J->y, J->phi);
    J->tile = t;
    J->slot = tileSize[t]++;
    tileJets[t * GRID_TOWERS + J->slot] = i;
}

static inline void tileRemove(int i)
{
    SearchJet *J = &jet[i];
    int *members = tileJets + J->tile * GRID_TOWERS;
    int last = members[--tileSize[J->tile]];
    members[J->slot] = last;
    jet[last].slot = J->slot;
}

/*
 * Offer j as neighbour of i at distance dR2.  Key order ((w_i*dR2)*invR2, min(i,j), max(i,j)):
 * for a fixed i, equal keys are decided by the smaller j in all three cases (both below i, both
 * above i, one on each side), so a tie goes to the smaller j.
 */
static inline void offerNeighbour(SearchJet *I, int j, double dR2)
{
    double key = (I->weight * dR2) * invR2;
    if (key < I->nnKey || (key == I->nnKey && j < I->nn)) {
        I->nnKey = key;
        I->nn = j;
        I->nnDR2 = dR2;
    }
}

/* full nn search of jet i over its 9 tiles */
static void searchNeighbour(int i)
{
    SearchJet *I = &jet[i];
    I->nn = NO_JET;
    I->nnKey = INFINITY;
    int t = I->tile;
    for (int a = 0; a < tileAroundCount[t]; a++) {
        int u = tileAround[t][a];
        const int *members = tileJets + u * GRID_TOWERS;
        for (int m = 0; m < tileSize[u]; m++) {
            int j = members[m];
            if (j == i) continue;
            double dR2 = pairDR2(I, &jet[j]);
            if (dR2 <= reachR2) offerNeighbour(I, j, dR2);
        }
    }
}

/*
 * Candidate of jet i: the smaller of the beam (w_i, i, BEAM) and the pair (d, min, max).
 * With equal measures the pair wins: either min(i,nn) < i, or min = i and max = nn < BEAM.
 */
static inline Candidate candidateOf(int i)
{
    const SearchJet *I = &jet[i];
    Candidate c;
    c.owner = i;
    int j = I->nn;
    if (j != NO_JET) {
        double wi = I->weight, wj = jet[j].weight;
        double d = ((wi < wj ? wi : wj) * I->nnDR2) * invR2;
        if (d <= wi) {
            c.measure = d;
            c.lower = i < j ? i : j;
            c.upper = i < j ? j : i;
            return c;
        }
    }
    c.measure = I->weight;
    c.lower = i;
    c.upper = BEAM_INDEX;
    return c;
}

/* jet i's nn changed: new candidate into its heap entry */
static inline void renewCandidate(int i)
{
    int pos = heapPos[i];
    heap[pos] = candidateOf(i);
    heapRestore(pos);
}

/* ---------------------------------------------------------------- output of one event */
typedef struct {
    int count;
    double px[GRID_TOWERS], py[GRID_TOWERS], pz[GRID_TOWERS], e[GRID_TOWERS];
    double pt[GRID_TOWERS], y[GRID_TOWERS], phi[GRID_TOWERS], mass[GRID_TOWERS];
    int towers[GRID_TOWERS];
} EventJets;

static EventJets outJets;
static int finalJet[GRID_TOWERS];           /* jet indices made final, in order */
static double finalPt[GRID_TOWERS];
static int sortA[GRID_TOWERS], sortB[GRID_TOWERS];
static int slotOfTower[GRID_TOWERS];        /* position in the input of tower t, -1 if absent */
static int searchAgain[MAX_JETS];           /* jets to search again after a step */

/* decreasing pt, ties to the smaller jet index */
static inline int finalBefore(int a, int b)
{
    if (finalPt[a] != finalPt[b]) return finalPt[a] > finalPt[b];
    return finalJet[a] < finalJet[b];
}

/* bottom-up merge sort of positions 0..n-1 of finalJet by finalBefore; returns the sorted array */
static int *sortFinal(int n)
{
    int *src = sortA, *dst = sortB;
    for (int k = 0; k < n; k++) src[k] = k;
    for (int width = 1; width < n; width *= 2) {
        for (int lo = 0; lo < n; lo += 2 * width) {
            int mid = lo + width < n ? lo + width : n;
            int hi = lo + 2 * width < n ? lo + 2 * width : n;
            int a = lo, b = mid, o = lo;
            while (a < mid && b < hi) dst[o++] = finalBefore(src[b], src[a]) ? src[b++] : src[a++];
            while (a < mid) dst[o++] = src[a++];
            while (b < hi) dst[o++] = src[b++];
        }
        int *swap = src; src = dst; dst = swap;
    }
    return src;
}

/* add tile t's neighbourhood to the visit list (each tile once per step) */
static inline int addNeighbourhood(int t, int *visit, int visits)
{
    for (int q = 0; q < tileAroundCount[t]; q++) {
        int u = tileAround[t][q];
        if (tileMark[u] != tileStamp) { tileMark[u] = tileStamp; visit[visits++] = u; }
    }
    return visits;
}

/* ---------------------------------------------------------------- the clustering of one event */
static void clusterEvent(int n, const int32_t *towerIndex, const double *towerEt, EventJets *out)
{
    /* jets 0..N-1 in increasing flat tower index (indices are unique and inside the grid) */
    for (int k = 0; k < n; k++) slotOfTower[towerIndex[k]] = k;
    int jets = 0;
    for (int t = 0; t < GRID_TOWERS; t++) {
        int k = slotOfTower[t];
        if (k < 0) continue;
        slotOfTower[t] = -1;
        double et = towerEt[k];
        if (!(et > 0.0) || et < 1e-150) continue;   /* threshold 0; never in the test files */
        int row = t / PHI_BINS, col = t % PHI_BINS;
        int i = jets++;
        JetMomentum *M = &mom[i];
        M->px = et * colCos[col];
        M->py = et * colSin[col];
        M->pz = et * rowSinh[row];
        M->e = et * rowCosh[row];
        M->kt2 = et * et;
        M->towers = 1;
        SearchJet *J = &jet[i];
        J->y = rowEta[row];
        J->phi = colPhi[col];
        J->weight = weightOf(M->kt2);
        J->nn = NO_JET;
        J->nnKey = INFINITY;
        tileInsert(i);
    }
    const int towerJets = jets;

    /* first neighbours: every pair of nearby tiles once, both directions */
    for (int t = 0; t < tileCount; t++) {
        const int *members = tileJets + t * GRID_TOWERS;
        for (int m = 0; m < tileSize[t]; m++) {
            int i = members[m];
            SearchJet *I = &jet[i];
            for (int q = m + 1; q < tileSize[t]; q++) {
                int j = members[q];
                double dR2 = pairDR2(I, &jet[j]);
                if (dR2 <= reachR2) { offerNeighbour(I, j, dR2); offerNeighbour(&jet[j], i, dR2); }
            }
            for (int f = 0; f < tileForwardCount[t]; f++) {
                int u = tileForward[t][f];
                const int *others = tileJets + u * GRID_TOWERS;
                for (int q = 0; q < tileSize[u]; q++) {
                    int j = others[q];
                    double dR2 = pairDR2(I, &jet[j]);
                    if (dR2 <= reachR2) { offerNeighbour(I, j, dR2); offerNeighbour(&jet[j], i, dR2); }
                }
            }
        }
    }
    heapSize = towerJets;
    for (int i = 0; i < towerJets; i++) { heap[i] = candidateOf(i); heapPos[i] = i; }
    for (int pos = towerJets / 2 - 1; pos >= 0; pos--) heapSiftDown(pos);

    int finals = 0;
    int visit[27];
    while (heapSize > 0) {
        int a = heap[0].lower, b = heap[0].upper;
        tileStamp++;
        int visits = 0, again = 0;

        if (b == BEAM_INDEX) {
            /* jet a is final; jets whose nn was a search again */
            heapRemove(a);
            tileRemove(a);
            finalJet[finals++] = a;
            visits = addNeighbourhood(jet[a].tile, visit, 0);
            for (int v = 0; v < visits; v++)
                for (int m = 0; m < tileSize[visit[v]]; m++) {
                    int j = tileJets[visit[v] * GRID_TOWERS + m];
                    if (jet[j].nn == a) searchAgain[again++] = j;
                }
            for (int r = 0; r < again; r++) {
                searchNeighbour(searchAgain[r]);
                renewCandidate(searchAgain[r]);
            }
            continue;
        }

        /* merge a and b into the new jet k (E-scheme, spec section 5) */
        int k = jets++;
        JetMomentum *Ma = &mom[a], *Mb = &mom[b], *Mk = &mom[k];
        Mk->px = Ma->px + Mb->px;
        Mk->py = Ma->py + Mb->py;
        Mk->pz = Ma->pz + Mb->pz;
        Mk->e = Ma->e + Mb->e;
        Mk->kt2 = Mk->px * Mk->px + Mk->py * Mk->py;
        Mk->towers = Ma->towers + Mb->towers;
        SearchJet *K = &jet[k];
        K->y = 0.5 * jetLog((Mk->e + Mk->pz) / (Mk->e - Mk->pz));
        double phi = jetAtan2(Mk->py, Mk->px);
        if (phi < 0) phi = phi + 2 * PI_VALUE;
        if (phi >= 2 * PI_VALUE) phi = phi - 2 * PI_VALUE;
        K->phi = phi;
        K->weight = weightOf(Mk->kt2);
        K->nn = NO_JET;
        K->nnKey = INFINITY;

        heapRemove(a);
        heapRemove(b);
        tileRemove(a);
        tileRemove(b);
        tileInsert(k);

        /* k's own neighbourhood first, so that its tiles lead the visit list */
        int nearCount = addNeighbourhood(K->tile, visit, 0);
        visits = addNeighbourhood(jet[a].tile, visit, nearCount);
        visits = addNeighbourhood(jet[b].tile, visit, visits);

        /* jets whose nn was a or b search again; the others around k may take k (strictly nearer:
           on a tie the older jet has the smaller index and keeps it) */
        for (int v = 0; v < visits; v++) {
            int nearK = v < nearCount;
            const int *members = tileJets + visit[v] * GRID_TOWERS;
            for (int m = 0; m < tileSize[visit[v]]; m++) {
                int j = members[m];
                if (j == k) continue;
                SearchJet *J = &jet[j];
                int searchesAgain = (J->nn == a || J->nn == b);
                if (searchesAgain) searchAgain[again++] = j;
                if (!nearK) continue;
                double dR2 = pairDR2(J, K);
                if (dR2 > reachR2) continue;
                offerNeighbour(K, j, dR2);
                if (!searchesAgain) {
                    double key = (J->weight * dR2) * invR2;
                    if (key < J->nnKey) {
                        J->nnKey = key;
                        J->nn = k;
                        J->nnDR2 = dR2;
                        renewCandidate(j);
                    }
                }
            }
        }
        for (int r = 0; r < again; r++) {
            searchNeighbour(searchAgain[r]);
            renewCandidate(searchAgain[r]);
        }
        heap[heapSize] = candidateOf(k);
        heapSiftUp(heapSize++);
    }

    /* final jets: decreasing pt, ties to the smaller index */
    for (int f = 0; f < finals; f++) finalPt[f] = sqrt(mom[finalJet[f]].kt2);
    int *order = sortFinal(finals);
    out->count = finals;
    for (int r = 0; r < finals; r++) {
        int f = order[r], i = finalJet[f];
        const JetMomentum *M = &mom[i];
        double px = M->px, py = M->py, pz = M->pz, e = M->e;
        out->px[r] = px; out->py[r] = py; out->pz[r] = pz; out->e[r] = e;
        out->pt[r] = finalPt[f];
        out->y[r] = jet[i].y;
        out->phi[r] = jet[i].phi;
        double m2 = e * e - px * px - py * py - pz * pz;
        out->mass[r] = sqrt(m2 > 0 ? m2 : 0);
        out->towers[r] = M->towers;
    }
}

/* ---------------------------------------------------------------- setup */
static void setupTables(double p)
{
    exponentP = p;
    invR2 = 1 / (RADIUS * RADIUS);
    reachR2 = RADIUS * RADIUS * (1 + 1e-9);
    for (int r = 0; r < ETA_BINS; r++) {
        rowEta[r] = ETA_MIN + (r + 0.5) * ((ETA_MAX - ETA_MIN) / ETA_BINS);
        rowSinh[r] = sinh(rowEta[r]);
        rowCosh[r] = cosh(rowEta[r]);
    }
    for (int c = 0; c < PHI_BINS; c++) {
        colPhi[c] = (c + 0.5) * ((2 * PI_VALUE) / PHI_BINS);
        colCos[c] = cos(colPhi[c]);
        colSin[c] = sin(colPhi[c]);
    }
    for (int t = 0; t < GRID_TOWERS; t++) slotOfTower[t] = -1;

    /* tiles at least R * (1 + 1e-9) wide in y and in phi; at least 3 columns so the wrap-around
       neighbours are distinct */
    double tileMinWidth = RADIUS * (1 + 1e-9);
    tileYMin = ETA_MIN;
    tileRows = (int)floor((ETA_MAX - ETA_MIN) / tileMinWidth);
    if (tileRows < 1) tileRows = 1;
    tileCols = (int)floor(2 * PI_VALUE / tileMinWidth);
    if (tileCols < 3) tileCols = 3;
    tileCount = tileRows * tileCols;
    if (tileCount > MAX_TILES) { fprintf(stderr, "too many tiles\n"); exit(1); }
    /* a tile never holds more live jets than the event has towers */
    tileJets = malloc(sizeof(int) * (size_t)tileCount * GRID_TOWERS);
    if (!tileJets) { fprintf(stderr, "out of memory\n"); exit(1); }
    invTileHeight = tileRows / (ETA_MAX - ETA_MIN);
    invTileWidth = tileCols / (2 * PI_VALUE);
    for (int row = 0; row < tileRows; row++)
        for (int col = 0; col < tileCols; col++) {
            int t = row * tileCols + col, na = 0, nf = 0;
            for (int dr = -1; dr <= 1; dr++) {
                int r2 = row + dr;
                if (r2 < 0 || r2 >= tileRows) continue;
                for (int dc = -1; dc <= 1; dc++) {
                    int u = r2 * tileCols + (col + dc + tileCols) % tileCols;
                    tileAround[t][na++] = u;
                    if (dr == 1 || (dr == 0 && dc == 1)) tileForward[t][nf++] = u;
                }
            }
            tileAroundCount[t] = na;
            tileForwardCount[t] = nf;
            tileSize[t] = 0;
            tileMark[t] = 0;
        }
}

/* ---------------------------------------------------------------- events file */
typedef struct {
    int count;
    int *start;          /* count + 1 */
    int32_t *index;
    double *et;
} EventFile;

static void readEvents(const char *path, EventFile *file)
{
    FILE *f = fopen(path, "rb");
    if (!f) { perror(path); exit(1); }
    fseek(f, 0, SEEK_END);
    long size = ftell(f);
    fseek(f, 0, SEEK_SET);
    unsigned char *bytes = malloc(size);
    if (!bytes || fread(bytes, 1, size, f) != (size_t)size) { fprintf(stderr, "cannot read %s\n", path); exit(1); }
    fclose(f);
    uint32_t count;
    memcpy(&count, bytes, 4);
    long off = 4, towers = 0;
    for (uint32_t e = 0; e < count; e++) {
        uint32_t n;
        memcpy(&n, bytes + off, 4);
        towers += n;
        off += 4 + 12L * n;
        if (off > size) { fprintf(stderr, "%s: truncated\n", path); exit(1); }
    }
    file->count = (int)count;
    file->start = malloc(sizeof(int) * (count + 1));
    file->index = malloc(sizeof(int32_t) * (towers ? towers : 1));
    file->et = malloc(sizeof(double) * (towers ? towers : 1));
    off = 4;
    int at = 0;
    for (uint32_t e = 0; e < count; e++) {
        uint32_t n;
        memcpy(&n, bytes + off, 4);
        off += 4;
        file->start[e] = at;
        memcpy(file->index + at, bytes + off, 4L * n);
        off += 4L * n;
        memcpy(file->et + at, bytes + off, 8L * n);
        off += 8L * n;
        /* the clusterer assumes valid events: indices inside the grid and unique */
        static unsigned char seen[GRID_TOWERS];
        memset(seen, 0, sizeof seen);
        for (uint32_t k = 0; k < n; k++) {
            int32_t t = file->index[at + k];
            if (t < 0 || t >= GRID_TOWERS || seen[t]) { fprintf(stderr, "event %u: bad tower index %d\n", e, t); exit(1); }
            seen[t] = 1;
        }
        at += (int)n;
    }
    file->start[count] = at;
    free(bytes);
}

static double nowNs(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return ts.tv_sec * 1e9 + ts.tv_nsec;
}

static int compareDoubles(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

int main(int argc, char **argv)
{
    if (argc != 4 || (strcmp(argv[1], "check") && strcmp(argv[1], "serve"))) {
        fprintf(stderr, "usage: %s check|serve FILE p\n", argv[0]);
        return 2;
    }
    EventFile file;
    readEvents(argv[2], &file);
    setupTables(atof(argv[3]));

    if (!strcmp(argv[1], "check")) {
        for (int e = 0; e < file.count; e++) {
            int s = file.start[e];
            clusterEvent(file.start[e + 1] - s, file.index + s, file.et + s, &outJets);
            for (int r = 0; r < outJets.count; r++)
                printf("%d %.17g %.17g %.17g %d\n", e, outJets.pt[r], outJets.y[r], outJets.phi[r], outJets.towers[r]);
        }
        return 0;
    }

    /* serve */
    setvbuf(stdout, NULL, _IOLBF, 0);
    char line[256];
    double *perRound = NULL;
    int perRoundCap = 0;
    double sink = 0;
    while (fgets(line, sizeof line, stdin)) {
        if (!strncmp(line, "quit", 4)) break;
        int first, count, rounds;
        if (sscanf(line, "run %d %d %d", &first, &count, &rounds) != 3 || first < 0 || count < 1 ||
            rounds < 1 || first + count > file.count) {
            printf("error bad request\n");
            continue;
        }
        if (rounds > perRoundCap) { perRoundCap = rounds; perRound = realloc(perRound, sizeof(double) * rounds); }
        for (int r = 0; r < rounds; r++) {
            double total = 0;
            for (int e = first; e < first + count; e++) {
                int s = file.start[e];
                double t0 = nowNs();
                clusterEvent(file.start[e + 1] - s, file.index + s, file.et + s, &outJets);
                total += nowNs() - t0;
                sink += outJets.pt[0];
            }
            perRound[r] = total / count;
        }
        qsort(perRound, rounds, sizeof(double), compareDoubles);
        double median = rounds % 2 ? perRound[rounds / 2] : 0.5 * (perRound[rounds / 2 - 1] + perRound[rounds / 2]);
        printf("%.1f\n", median);
    }
    if (sink == 12345.678) fprintf(stderr, "!");
    return 0;
}
