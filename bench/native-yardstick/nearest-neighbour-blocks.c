/*
 * A plain native build of the nearest-neighbour generalised-kt method with a coarse grid of
 * blocks (arXiv:hep-ph/0512210), as the yardstick for the engine's speed: blocks a little wider
 * than R, exact neighbours under the key of clustering-spec.md section 4, a binary priority
 * queue of candidates. It is not part of jetlag (no product code or test uses it);
 * bench/native-pair.bench.ts builds it with gcc and times it against the engine, batch for
 * batch, on the same invented events.
 *
 *   gcc -O3 -march=native -o nearest-neighbour-blocks nearest-neighbour-blocks.c -lm
 *   ./nearest-neighbour-blocks check FILE p   prints "event pt y phi towerCount" per final jet
 *   ./nearest-neighbour-blocks serve FILE p   stdin: "run FIRST COUNT ROUNDS" -> median over
 *                                             rounds of the mean ns per event; "quit" ends
 *   FILE: u32 eventCount, then per event u32 n, i32 flatIndex[n], f64 et[n] (little endian)
 *
 * Default grid and R = 0.4 only. log, atan2, sin, cos, sinh and cosh are the C library's, not
 * V8's, so jets agree with the engine's only to the last bits (for p = 0 and 1 on a grid, exact
 * distance ties then flip some later choices); for timing that does not matter.
 *
 * Method: the (y, phi) plane is cut into blocks a little wider than R (phi wraps around; for the
 * default grid: 12 rows of 0.4167 in y times 15 columns of 0.4189 in phi); every block keeps an
 * array of its live jets (removal swaps in the last one). Each jet keeps its nearest neighbour
 * under the exact key ((w_i * dR2) * invR2, min(i,j), max(i,j)), searched in its own block and
 * the 8 around it (pairs with dR2 > R*R*(1+1e-9) are ignored). Its candidate is the smaller of
 * its beam (w_i, i, BEAM) and its pair (d_{i,nearest}, min, max); a binary priority queue over
 * the candidates, indexed by jet, gives the next step. After a step, the jets in the 9 blocks
 * around the merged jets whose nearest neighbour was one of them search again; the jets around
 * the new jet take it when strictly nearer by their own key.
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

/* ---------------------------------------------------------------- blocks */
#define MAX_BLOCKS 4096
static int blockRows, blockCols, blockCount;
static double blockYMin, invBlockHeight, invBlockWidth;
static int *blockMembers;                /* block t's live jets: blockMembers[t * GRID_TOWERS + k] */
static int blockLive[MAX_BLOCKS];        /* number of live jets in the block */
static int blocksAround[MAX_BLOCKS][9];  /* the block itself and its neighbours */
static int blocksAroundCount[MAX_BLOCKS];
static int laterBlocks[MAX_BLOCKS][4];   /* the neighbours after it: each pair of blocks once */
static int laterBlocksCount[MAX_BLOCKS];
static int blockSeenInStep[MAX_BLOCKS];  /* visit stamp to merge neighbourhoods */
static int stepNumber;

/* ---------------------------------------------------------------- jets */
/* what the neighbour search touches, one record (64 bytes) per jet */
typedef struct {
    double y, phi, weight;
    double nearestKey;       /* (w_i * dR2) * invR2 to the nearest, +inf if none */
    double nearestDR2;       /* dR2 to the nearest */
    int nearest;             /* NO_JET if no jet within reach */
    int position;            /* position in its block's array */
    int block;
    int pad[3];              /* to 64 bytes */
} JetNeighbourRecord;

/* what only recombination and output touch */
typedef struct {
    double px, py, pz, e, kt2;
    int towers;
    int pad;
} JetFourVector;

static JetNeighbourRecord record[MAX_JETS];
static JetFourVector fourVector[MAX_JETS];

/* ---------------------------------------------------------------- candidate queue */
/* a binary heap of the candidates, indexed by jet (queuePosition); the candidate of a jet:
   (measure, lower, upper) in the order of spec section 4 step 1 */
typedef struct {
    double measure;
    int lower, upper;
    int owner;               /* the jet whose candidate this is */
} Candidate;

static Candidate queue[MAX_JETS];
static int queuePosition[MAX_JETS];
static int queueSize;

static inline int candidateLess(const Candidate *x, const Candidate *y)
{
    if (x->measure != y->measure) return x->measure < y->measure;
    if (x->lower != y->lower) return x->lower < y->lower;
    return x->upper < y->upper;
}

static void queueRaise(int pos)
{
    Candidate c = queue[pos];
    while (pos > 0) {
        int parent = (pos - 1) >> 1;
        if (!candidateLess(&c, &queue[parent])) break;
        queue[pos] = queue[parent];
        queuePosition[queue[pos].owner] = pos;
        pos = parent;
    }
    queue[pos] = c;
    queuePosition[c.owner] = pos;
}

static void queueLower(int pos)
{
    Candidate c = queue[pos];
    for (;;) {
        int child = 2 * pos + 1;
        if (child >= queueSize) break;
        if (child + 1 < queueSize && candidateLess(&queue[child + 1], &queue[child])) child++;
        if (!candidateLess(&queue[child], &c)) break;
        queue[pos] = queue[child];
        queuePosition[queue[pos].owner] = pos;
        pos = child;
    }
    queue[pos] = c;
    queuePosition[c.owner] = pos;
}

/* put entry pos back in order after its key changed */
static inline void queueReorder(int pos)
{
    if (pos > 0 && candidateLess(&queue[pos], &queue[(pos - 1) >> 1])) queueRaise(pos);
    else queueLower(pos);
}

static void queueRemove(int owner)
{
    int pos = queuePosition[owner];
    queueSize--;
    if (pos == queueSize) return;
    queue[pos] = queue[queueSize];
    queuePosition[queue[pos].owner] = pos;
    queueReorder(pos);
}

/* ---------------------------------------------------------------- geometry */
static inline double pairDR2(const JetNeighbourRecord *a, const JetNeighbourRecord *b)
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

static inline int blockOf(double y, double phi)
{
    int row = (int)floor((y - blockYMin) * invBlockHeight);
    int col = (int)floor(phi * invBlockWidth);
    if (row < 0) row = 0;
    if (row >= blockRows) row = blockRows - 1;
    if (col < 0) col = 0;
    if (col >= blockCols) col = blockCols - 1;
    return row * blockCols + col;
}

static inline void blockAdd(int i)
{
    JetNeighbourRecord *J = &record[i];
    int t = blockOf(J->y, J->phi);
    J->block = t;
    J->position = blockLive[t]++;
    blockMembers[t * GRID_TOWERS + J->position] = i;
}

static inline void blockDrop(int i)
{
    JetNeighbourRecord *J = &record[i];
    int *members = blockMembers + J->block * GRID_TOWERS;
    int last = members[--blockLive[J->block]];
    members[J->position] = last;
    record[last].position = J->position;
}

/*
 * Offer j as neighbour of i at distance dR2.  Key order ((w_i*dR2)*invR2, min(i,j), max(i,j)):
 * for a fixed i, equal keys are decided by the smaller j in all three cases (both below i, both
 * above i, one on each side), so a tie goes to the smaller j.
 */
static inline void offerNearest(JetNeighbourRecord *I, int j, double dR2)
{
    double key = (I->weight * dR2) * invR2;
    if (key < I->nearestKey || (key == I->nearestKey && j < I->nearest)) {
        I->nearestKey = key;
        I->nearest = j;
        I->nearestDR2 = dR2;
    }
}

/* full nearest-neighbour search of jet i over its 9 blocks */
static void findNearest(int i)
{
    JetNeighbourRecord *I = &record[i];
    I->nearest = NO_JET;
    I->nearestKey = INFINITY;
    int t = I->block;
    for (int a = 0; a < blocksAroundCount[t]; a++) {
        int u = blocksAround[t][a];
        const int *members = blockMembers + u * GRID_TOWERS;
        for (int m = 0; m < blockLive[u]; m++) {
            int j = members[m];
            if (j == i) continue;
            double dR2 = pairDR2(I, &record[j]);
            if (dR2 <= reachR2) offerNearest(I, j, dR2);
        }
    }
}

/*
 * Candidate of jet i: the smaller of the beam (w_i, i, BEAM) and the pair (d, min, max).
 * With equal measures the pair wins: either min(i,nearest) < i, or min = i and max = nearest < BEAM.
 */
static inline Candidate candidateOf(int i)
{
    const JetNeighbourRecord *I = &record[i];
    Candidate c;
    c.owner = i;
    int j = I->nearest;
    if (j != NO_JET) {
        double wi = I->weight, wj = record[j].weight;
        double d = ((wi < wj ? wi : wj) * I->nearestDR2) * invR2;
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

/* jet i's nearest changed: new candidate into its queue entry */
static inline void requeueCandidate(int i)
{
    int pos = queuePosition[i];
    queue[pos] = candidateOf(i);
    queueReorder(pos);
}

/* ---------------------------------------------------------------- output of one event */
typedef struct {
    int count;
    double px[GRID_TOWERS], py[GRID_TOWERS], pz[GRID_TOWERS], e[GRID_TOWERS];
    double pt[GRID_TOWERS], y[GRID_TOWERS], phi[GRID_TOWERS], mass[GRID_TOWERS];
    int towers[GRID_TOWERS];
} EventJets;

static EventJets outJets;
static int finalJet[GRID_TOWERS];            /* jet indices made final, in order */
static double finalPt[GRID_TOWERS];
static int sortA[GRID_TOWERS], sortB[GRID_TOWERS];
static int inputPositionOfTower[GRID_TOWERS]; /* position in the input of tower t, -1 if absent */
static int lostNearest[MAX_JETS];            /* jets to search again after a step */

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

/* add the blocks around block t to the visit list (each block once per step) */
static inline int collectBlocksAround(int t, int *visit, int visits)
{
    for (int q = 0; q < blocksAroundCount[t]; q++) {
        int u = blocksAround[t][q];
        if (blockSeenInStep[u] != stepNumber) { blockSeenInStep[u] = stepNumber; visit[visits++] = u; }
    }
    return visits;
}

/* ---------------------------------------------------------------- the clustering of one event */
static void clusterEvent(int n, const int32_t *towerIndex, const double *towerEt, EventJets *out)
{
    /* jets 0..N-1 in increasing flat tower index (indices are unique and inside the grid) */
    for (int k = 0; k < n; k++) inputPositionOfTower[towerIndex[k]] = k;
    int jets = 0;
    for (int t = 0; t < GRID_TOWERS; t++) {
        int k = inputPositionOfTower[t];
        if (k < 0) continue;
        inputPositionOfTower[t] = -1;
        double et = towerEt[k];
        if (!(et > 0.0) || et < 1e-150) continue;   /* threshold 0; never in the test files */
        int row = t / PHI_BINS, col = t % PHI_BINS;
        int i = jets++;
        JetFourVector *M = &fourVector[i];
        M->px = et * colCos[col];
        M->py = et * colSin[col];
        M->pz = et * rowSinh[row];
        M->e = et * rowCosh[row];
        M->kt2 = et * et;
        M->towers = 1;
        JetNeighbourRecord *J = &record[i];
        J->y = rowEta[row];
        J->phi = colPhi[col];
        J->weight = weightOf(M->kt2);
        J->nearest = NO_JET;
        J->nearestKey = INFINITY;
        blockAdd(i);
    }
    const int towerJetCount = jets;

    /* first neighbours: every pair of nearby blocks once, both directions */
    for (int t = 0; t < blockCount; t++) {
        const int *members = blockMembers + t * GRID_TOWERS;
        for (int m = 0; m < blockLive[t]; m++) {
            int i = members[m];
            JetNeighbourRecord *I = &record[i];
            for (int q = m + 1; q < blockLive[t]; q++) {
                int j = members[q];
                double dR2 = pairDR2(I, &record[j]);
                if (dR2 <= reachR2) { offerNearest(I, j, dR2); offerNearest(&record[j], i, dR2); }
            }
            for (int f = 0; f < laterBlocksCount[t]; f++) {
                int u = laterBlocks[t][f];
                const int *others = blockMembers + u * GRID_TOWERS;
                for (int q = 0; q < blockLive[u]; q++) {
                    int j = others[q];
                    double dR2 = pairDR2(I, &record[j]);
                    if (dR2 <= reachR2) { offerNearest(I, j, dR2); offerNearest(&record[j], i, dR2); }
                }
            }
        }
    }
    queueSize = towerJetCount;
    for (int i = 0; i < towerJetCount; i++) { queue[i] = candidateOf(i); queuePosition[i] = i; }
    for (int pos = towerJetCount / 2 - 1; pos >= 0; pos--) queueLower(pos);

    int finals = 0;
    int visit[27];
    while (queueSize > 0) {
        int a = queue[0].lower, b = queue[0].upper;
        stepNumber++;
        int visits = 0, again = 0;

        if (b == BEAM_INDEX) {
            /* jet a is final; jets whose nearest was a search again */
            queueRemove(a);
            blockDrop(a);
            finalJet[finals++] = a;
            visits = collectBlocksAround(record[a].block, visit, 0);
            for (int v = 0; v < visits; v++)
                for (int m = 0; m < blockLive[visit[v]]; m++) {
                    int j = blockMembers[visit[v] * GRID_TOWERS + m];
                    if (record[j].nearest == a) lostNearest[again++] = j;
                }
            for (int r = 0; r < again; r++) {
                findNearest(lostNearest[r]);
                requeueCandidate(lostNearest[r]);
            }
            continue;
        }

        /* merge a and b into the new jet k (E-scheme, spec section 5) */
        int k = jets++;
        JetFourVector *Ma = &fourVector[a], *Mb = &fourVector[b], *Mk = &fourVector[k];
        Mk->px = Ma->px + Mb->px;
        Mk->py = Ma->py + Mb->py;
        Mk->pz = Ma->pz + Mb->pz;
        Mk->e = Ma->e + Mb->e;
        Mk->kt2 = Mk->px * Mk->px + Mk->py * Mk->py;
        Mk->towers = Ma->towers + Mb->towers;
        JetNeighbourRecord *K = &record[k];
        K->y = 0.5 * jetLog((Mk->e + Mk->pz) / (Mk->e - Mk->pz));
        double phi = jetAtan2(Mk->py, Mk->px);
        if (phi < 0) phi = phi + 2 * PI_VALUE;
        if (phi >= 2 * PI_VALUE) phi = phi - 2 * PI_VALUE;
        K->phi = phi;
        K->weight = weightOf(Mk->kt2);
        K->nearest = NO_JET;
        K->nearestKey = INFINITY;

        queueRemove(a);
        queueRemove(b);
        blockDrop(a);
        blockDrop(b);
        blockAdd(k);

        /* the blocks around k first, so that they lead the visit list */
        int aroundNewCount = collectBlocksAround(K->block, visit, 0);
        visits = collectBlocksAround(record[a].block, visit, aroundNewCount);
        visits = collectBlocksAround(record[b].block, visit, visits);

        /* jets whose nearest was a or b search again; the others around k may take k (strictly nearer:
           on a tie the older jet has the smaller index and keeps it) */
        for (int v = 0; v < visits; v++) {
            int aroundNew = v < aroundNewCount;
            const int *members = blockMembers + visit[v] * GRID_TOWERS;
            for (int m = 0; m < blockLive[visit[v]]; m++) {
                int j = members[m];
                if (j == k) continue;
                JetNeighbourRecord *J = &record[j];
                int lostItsNearest = (J->nearest == a || J->nearest == b);
                if (lostItsNearest) lostNearest[again++] = j;
                if (!aroundNew) continue;
                double dR2 = pairDR2(J, K);
                if (dR2 > reachR2) continue;
                offerNearest(K, j, dR2);
                if (!lostItsNearest) {
                    double key = (J->weight * dR2) * invR2;
                    if (key < J->nearestKey) {
                        J->nearestKey = key;
                        J->nearest = k;
                        J->nearestDR2 = dR2;
                        requeueCandidate(j);
                    }
                }
            }
        }
        for (int r = 0; r < again; r++) {
            findNearest(lostNearest[r]);
            requeueCandidate(lostNearest[r]);
        }
        queue[queueSize] = candidateOf(k);
        queueRaise(queueSize++);
    }

    /* final jets: decreasing pt, ties to the smaller index */
    for (int f = 0; f < finals; f++) finalPt[f] = sqrt(fourVector[finalJet[f]].kt2);
    int *order = sortFinal(finals);
    out->count = finals;
    for (int r = 0; r < finals; r++) {
        int f = order[r], i = finalJet[f];
        const JetFourVector *M = &fourVector[i];
        double px = M->px, py = M->py, pz = M->pz, e = M->e;
        out->px[r] = px; out->py[r] = py; out->pz[r] = pz; out->e[r] = e;
        out->pt[r] = finalPt[f];
        out->y[r] = record[i].y;
        out->phi[r] = record[i].phi;
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
    for (int t = 0; t < GRID_TOWERS; t++) inputPositionOfTower[t] = -1;

    /* blocks at least R * (1 + 1e-9) wide in y and in phi; at least 3 columns so the wrap-around
       neighbours are distinct */
    double blockMinWidth = RADIUS * (1 + 1e-9);
    blockYMin = ETA_MIN;
    blockRows = (int)floor((ETA_MAX - ETA_MIN) / blockMinWidth);
    if (blockRows < 1) blockRows = 1;
    blockCols = (int)floor(2 * PI_VALUE / blockMinWidth);
    if (blockCols < 3) blockCols = 3;
    blockCount = blockRows * blockCols;
    if (blockCount > MAX_BLOCKS) { fprintf(stderr, "too many blocks\n"); exit(1); }
    /* a block never holds more live jets than the event has towers */
    blockMembers = malloc(sizeof(int) * (size_t)blockCount * GRID_TOWERS);
    if (!blockMembers) { fprintf(stderr, "out of memory\n"); exit(1); }
    invBlockHeight = blockRows / (ETA_MAX - ETA_MIN);
    invBlockWidth = blockCols / (2 * PI_VALUE);
    for (int row = 0; row < blockRows; row++)
        for (int col = 0; col < blockCols; col++) {
            int t = row * blockCols + col, na = 0, nf = 0;
            for (int dr = -1; dr <= 1; dr++) {
                int r2 = row + dr;
                if (r2 < 0 || r2 >= blockRows) continue;
                for (int dc = -1; dc <= 1; dc++) {
                    int u = r2 * blockCols + (col + dc + blockCols) % blockCols;
                    blocksAround[t][na++] = u;
                    if (dr == 1 || (dr == 0 && dc == 1)) laterBlocks[t][nf++] = u;
                }
            }
            blocksAroundCount[t] = na;
            laterBlocksCount[t] = nf;
            blockLive[t] = 0;
            blockSeenInStep[t] = 0;
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
