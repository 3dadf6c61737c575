// Reference outputs of the PCG authors' C++ implementation (pcg_random.hpp,
// Debian's libpcg-cpp-dev), for tests/check_rng.c --reference FILE to
// reproduce with scatterprop's own C implementation.
//
// O'Neill, M.E. (2014). PCG: A family of simple fast space-efficient
// statistically good algorithms for random number generation. Technical
// report HMC-CS-2014-0905, Harvey Mudd College.
//
// How the seeding maps.  pcg_engines::setseq_xsh_rr_64_32 (= pcg32) and
// setseq_xsl_rr_128_64 (= pcg64) are constructed as engine(initstate,
// initseq); the constructor sets inc = (initseq << 1) | 1 and state =
// (initstate + inc) * mult + inc.  That is exactly the C reference's
// pcg32_srandom_r / pcg64_srandom_r (state = 0; step, giving inc; state +=
// initstate; step), which sp_pcg32_seed and sp_pcg64_seed follow.  For pcg64
// the 128-bit values are initstate = initstate_hi * 2^64 + initstate_lo and
// initseq = initseq_hi * 2^64 + initseq_lo, the (hi, lo) argument pairs of
// sp_pcg64_seed.  advance(delta) and backstep(delta) = advance(-delta) take
// the delta mod 2^64 (pcg32) or mod 2^128 (pcg64), as sp_pcg*_advance do.
// pcg32 outputs from the state before each step, pcg64 from the state after
// it (output_previous = sizeof(itype) <= 8), as in the C reference.
//
// The block stream rule of include/scatterprop/rng.h is implemented here a
// second time, from its documentation, with this file's own splitmix64, so
// that two independent implementations of the rule must agree.
//
// Output: one case per line, fields separated by one space, numbers in hex
// without 0x:
//   pcg32 OP IS SEQ DELTA N v1 .. vN          (64-bit IS, SEQ, DELTA)
//   pcg64 OP ISHI ISLO SEQHI SEQLO DHI DLO N v1 .. vN
//   block SEED BLOCK SUB N v1 .. vN           (pcg64 outputs)
//   splitmix64 X Y                            (Y = splitmix64(X))
//   end COUNT                                 (number of case lines above)
// OP is "seed" (outputs right after construction; DELTA is 0), "advance"
// (after advance(DELTA)), "backstep" (after backstep(DELTA)) or "discard"
// (after discard(DELTA), which check_rng reproduces by DELTA single steps).
#include <cinttypes>
#include <cstdint>
#include <cstdio>

#include <pcg_random.hpp>

namespace {

typedef pcg_engines::setseq_xsh_rr_64_32 ref32;
typedef pcg_engines::setseq_xsl_rr_128_64 ref64;
typedef pcg_extras::pcg128_t u128;

const int kOutputs = 6;
unsigned long g_count = 0;
std::FILE *g_out = nullptr;

u128 make128(uint64_t hi, uint64_t lo)
{
  return (u128(hi) << 64) | u128(lo);
}

// The SplitMix64 finaliser as rng.h documents it (Steele, Lea & Flood 2014,
// OOPSLA '14, 453-472; Stafford's Mix13 constants).
uint64_t splitmix64(uint64_t x)
{
  x = (x ^ (x >> 30)) * UINT64_C(0xbf58476d1ce4e5b9);
  x = (x ^ (x >> 27)) * UINT64_C(0x94d049bb133111eb);
  return x ^ (x >> 31);
}

template <typename Engine>
void print_outputs(Engine &rng, int n)
{
  std::fprintf(g_out, " %x", unsigned(n));
  for (int i = 0; i < n; i++)
    std::fprintf(g_out, " %" PRIx64, uint64_t(rng()));
  std::fprintf(g_out, "\n");
  g_count++;
}

template <typename Engine, typename Int>
void apply(Engine &rng, const char *op, Int delta)
{
  if (op[0] == 'a') rng.advance(delta);
  else if (op[0] == 'b') rng.backstep(delta);
  else if (op[0] == 'd') rng.discard(delta);
}

void case32(const char *op, uint64_t is, uint64_t seq, uint64_t delta)
{
  ref32 rng(is, seq);
  apply(rng, op, delta);
  std::fprintf(g_out, "pcg32 %s %" PRIx64 " %" PRIx64 " %" PRIx64, op, is, seq,
               delta);
  print_outputs(rng, kOutputs);
}

void case64(const char *op, uint64_t ishi, uint64_t islo, uint64_t seqhi,
            uint64_t seqlo, uint64_t dhi, uint64_t dlo)
{
  ref64 rng(make128(ishi, islo), make128(seqhi, seqlo));
  apply(rng, op, make128(dhi, dlo));
  std::fprintf(g_out,
               "pcg64 %s %" PRIx64 " %" PRIx64 " %" PRIx64 " %" PRIx64
               " %" PRIx64 " %" PRIx64,
               op, ishi, islo, seqhi, seqlo, dhi, dlo);
  print_outputs(rng, kOutputs);
}

void case_block(uint64_t seed, uint64_t block, uint32_t sub)
{
  // initstate = (splitmix64(seed), splitmix64(seed ^ gamma)),
  // initseq = (seed, block * 2^16 + sub), both as (hi, lo).
  const uint64_t gamma = UINT64_C(0x9e3779b97f4a7c15);
  ref64 rng(make128(splitmix64(seed), splitmix64(seed ^ gamma)),
            make128(seed, block * 65536u + sub));
  std::fprintf(g_out, "block %" PRIx64 " %" PRIx64 " %" PRIx32, seed, block,
               sub);
  print_outputs(rng, 4);
}

} // namespace

int main(int argc, char **argv)
{
  g_out = stdout;
  if (argc > 1) {
    g_out = std::fopen(argv[1], "w");
    if (!g_out) {
      std::perror(argv[1]);
      return 1;
    }
  }
  const uint64_t ones = ~UINT64_C(0), top = UINT64_C(1) << 63;

  // pcg32: the demo pair (42, 54), pcg_basic's default initializer, edges.
  const uint64_t seeds32[][2] = {
      {42, 54},
      {UINT64_C(0x853c49e6748fea9b), UINT64_C(0xda3e39cb94b95bdb)},
      {0, 0},
      {ones, ones},
      {top, top},
      {UINT64_C(0x0123456789abcdef), UINT64_C(0xfedcba9876543210)},
  };
  const uint64_t deltas32[] = {1, 2, 1000, UINT64_C(0x123456789), top,
                               ones, UINT64_C(0xdeadbeefcafef00d)};
  const uint64_t steps[] = {1, 3, 17, 1000};
  for (const auto &s : seeds32) {
    case32("seed", s[0], s[1], 0);
    for (uint64_t d : deltas32) {
      case32("advance", s[0], s[1], d);
      case32("backstep", s[0], s[1], d);
    }
    for (uint64_t d : steps) case32("discard", s[0], s[1], d);
  }

  // pcg64: (initstate_hi, initstate_lo, initseq_hi, initseq_lo).
  const uint64_t seeds64[][4] = {
      {0, 42, 0, 54},
      {0, 0, 0, 0},
      {ones, ones, ones, ones},
      {top, 0, top, 0},
      {UINT64_C(0x0123456789abcdef), UINT64_C(0xfedcba9876543210),
       UINT64_C(0xdeadbeefcafef00d), UINT64_C(0x0badc0ffee123457)},
      {UINT64_C(0x979c9a98d8462005), UINT64_C(0x7d3e9cb6cfe0549b),
       UINT64_C(0x0000000000000001), UINT64_C(0xda3e39cb94b95bdb)},
  };
  const uint64_t deltas64[][2] = {
      {0, 1}, {0, 2}, {0, 1000}, {0, top}, {1, 0}, {ones, ones},
      {top, 5}, {UINT64_C(0x0123456789abcdef), UINT64_C(0x1122334455667788)},
  };
  for (const auto &s : seeds64) {
    case64("seed", s[0], s[1], s[2], s[3], 0, 0);
    for (const auto &d : deltas64) {
      case64("advance", s[0], s[1], s[2], s[3], d[0], d[1]);
      case64("backstep", s[0], s[1], s[2], s[3], d[0], d[1]);
    }
    for (uint64_t d : steps) case64("discard", s[0], s[1], s[2], s[3], 0, d);
  }

  // Block streams: the rule's corners (block < 2^48, sub < 2^16).
  const uint64_t bseeds[] = {0, 1, 42, top + 5, ones};
  const uint64_t blocks[] = {0, 1, 2, 1000, (UINT64_C(1) << 48) - 1};
  const uint32_t subs[] = {0, 1, 3, 65535};
  for (uint64_t s : bseeds)
    for (uint64_t b : blocks)
      for (uint32_t u : subs) case_block(s, b, u);

  // splitmix64 itself, on the same seeds and their gamma flips.
  for (uint64_t s : bseeds) {
    const uint64_t xs[] = {s, s ^ UINT64_C(0x9e3779b97f4a7c15)};
    for (uint64_t x : xs) {
      std::fprintf(g_out, "splitmix64 %" PRIx64 " %" PRIx64 "\n", x,
                   splitmix64(x));
      g_count++;
    }
  }

  std::fprintf(g_out, "end %lx\n", g_count);
  if (g_out != stdout && std::fclose(g_out) != 0) {
    std::perror(argv[1]);
    return 1;
  }
  return 0;
}
