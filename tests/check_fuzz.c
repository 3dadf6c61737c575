/* The fuzz inputs in every build: each file of tests/fuzz/corpus/<reader>/
 * (the seeds) and tests/fuzz/regress/<reader>/ (every input a fuzzer ever
 * crashed, hung or leaked on, kept after the fix) runs through its
 * harness, compiled in here with the entry point renamed
 * (tests/fuzz.cmake).  A harness traps on a failure without a message and
 * ASan/UBSan/valgrind catch the rest, so each file is its own test case
 * (Check runs it in a child process; a signal fails that case alone).  The
 * numbered list of files is printed first, to name the file of a failing
 * case. */
#include <dirent.h>
#include <stdint.h>
#include <string.h>

#include "sp_test.h"

int sp_fuzz_ingest(const uint8_t *data, size_t size);
int sp_fuzz_model(const uint8_t *data, size_t size);
int sp_fuzz_record(const uint8_t *data, size_t size);

typedef struct {
  const char *reader;
  int (*run)(const uint8_t *, size_t);
} harness;

static const harness harnesses[] = {
    {"ingest", sp_fuzz_ingest}, {"model", sp_fuzz_model}, {"record", sp_fuzz_record}};
#define NHARNESS (sizeof harnesses / sizeof harnesses[0])

#define MAX_INPUTS 4096
static struct {
  char path[2048];
  const harness *h;
  int regress;
} inputs[MAX_INPUTS];
static size_t ninputs;
static size_t nregress[NHARNESS];

static int by_name(const void *a, const void *b)
{
  return strcmp(*(char *const *)a, *(char *const *)b);
}

static void collect(const harness *h, size_t hi, const char *kind)
{
  char dir[768];
  snprintf(dir, sizeof dir, "%s/tests/fuzz/%s/%s", SP_SOURCE_DIR, kind, h->reader);
  DIR *d = opendir(dir);
  if (!d) return;
  char *names[MAX_INPUTS];
  size_t n = 0;
  struct dirent *de;
  while ((de = readdir(d)) != NULL && n < MAX_INPUTS)
    if (de->d_name[0] != '.' && strcmp(de->d_name, "README.md") != 0)
      names[n++] = strdup(de->d_name);
  closedir(d);
  qsort(names, n, sizeof names[0], by_name);
  for (size_t i = 0; i < n; i++) {
    if (ninputs < MAX_INPUTS) {
      snprintf(inputs[ninputs].path, sizeof inputs[ninputs].path, "%s/%.1000s", dir, names[i]);
      inputs[ninputs].h = h;
      inputs[ninputs].regress = strcmp(kind, "regress") == 0;
      if (inputs[ninputs].regress) nregress[hi]++;
      ninputs++;
    }
    free(names[i]);
  }
}

START_TEST(test_input)
{
  size_t len = 0;
  char *data = slurp_len(inputs[_i].path, &len);
  ck_assert_msg(data != NULL, "cannot read %s", inputs[_i].path);
  /* The harness's own checks trap; it returns 0 otherwise. */
  ck_assert_int_eq(inputs[_i].h->run((const uint8_t *)data, len), 0);
  free(data);
}
END_TEST

START_TEST(test_every_reader_has_inputs)
{
  /* Each harness has seeds, and regress/ holds inputs, so the replay
   * cannot pass by finding no files. */
  size_t seeds[NHARNESS] = {0}, nreg = 0;
  for (size_t i = 0; i < ninputs; i++)
    if (!inputs[i].regress) seeds[inputs[i].h - harnesses]++;
  for (size_t h = 0; h < NHARNESS; h++) {
    ck_assert_msg(seeds[h] > 0, "no seeds in tests/fuzz/corpus/%s", harnesses[h].reader);
    nreg += nregress[h];
  }
  ck_assert_msg(nreg > 0, "no inputs in tests/fuzz/regress/");
}
END_TEST

int main(void)
{
  for (size_t h = 0; h < NHARNESS; h++) {
    collect(&harnesses[h], h, "corpus");
    collect(&harnesses[h], h, "regress");
  }
  for (size_t i = 0; i < ninputs; i++)
    fprintf(stderr, "check_fuzz: input %zu: %s\n", i, inputs[i].path + strlen(SP_SOURCE_DIR) + 1);
  Suite *s = suite_create("fuzz");
  TCase *tc = tcase_create("replay");
  tcase_set_timeout(tc, 60);
  tcase_add_test(tc, test_every_reader_has_inputs);
  tcase_add_loop_test(tc, test_input, 0, (int)ninputs);
  suite_add_tcase(s, tc);
  return sp_run_suite(s);
}
