/* cpx_dataset_run from C99 with the public header only, on a small simulated BIDS dataset
 * (invented data): a dry run lists without writing, one participant runs, the group level
 * writes the tidy tables, and refusals (level, options, pointers, folders) set the status,
 * a message naming the argument and *summary_json = NULL. */
#define _POSIX_C_SOURCE 200809L /* mkdtemp */
#include <critplex/critplex.h>

#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "check.h"

static int exists(const char* path) {
  struct stat st;
  return stat(path, &st) == 0;
}

int main(void) {
  char dir[] = "/tmp/critplex-capi-dataset-XXXXXX";
  if (!mkdtemp(dir)) return 1;
  char data[64], deriv[128], out[64], options[1024], path[512];
  snprintf(data, sizeof data, "%s/D", dir);
  snprintf(deriv, sizeof deriv, "%s/derivatives/critplex-simulate", data);
  snprintf(out, sizeof out, "%s/OUT", dir);
  char* summary = NULL;
  EXPECT(cpx_simulate_study("{\"layout\": \"bids\", \"regions\": 8, \"frames\": 60, \"groups\": [{\"name\": \"a\", "
                            "\"subjects\": 2}, {\"name\": \"b\", \"subjects\": 2}]}",
                            data, &summary) == CPX_OK);
  cpx_string_free(summary);

  snprintf(options, sizeof options,
           "{\"atlas\": \"%s/space-sleeplab_desc-demoatlas_dseg.nii.gz\", \"participant_label\": [\"a01\"], "
           "\"config\": {\"connect\": {\"method\": \"pearson\"}, \"sweep\": {\"max_density\": 0.3, \"grid\": 0.1}}",
           deriv);
  char dry[1100];
  snprintf(dry, sizeof dry, "%s, \"dry_run\": true}", options);
  strcat(options, "}");
  EXPECT(cpx_dataset_run(deriv, out, "participant", dry, NULL, NULL, &summary) == CPX_OK);
  EXPECT(summary && strstr(summary, "\"planned\"") && strstr(summary, "sub-a01_task-rest_space-sleeplab_atlas-demoatlas_topology.json"));
  cpx_string_free(summary);
  EXPECT(!exists(out)); /* a dry run writes nothing */

  EXPECT(cpx_dataset_run(deriv, out, "participant", options, NULL, NULL, &summary) == CPX_OK);
  EXPECT(summary && strstr(summary, "\"done\":1"));
  cpx_string_free(summary);
  snprintf(path, sizeof path, "%s/sub-a01/func/sub-a01_task-rest_space-sleeplab_atlas-demoatlas_desc-unfiltered_curves.json", out);
  EXPECT(exists(path));
  EXPECT(cpx_dataset_run(deriv, out, "group", NULL, NULL, NULL, &summary) == CPX_OK);
  cpx_string_free(summary);
  snprintf(path, sizeof path, "%s/group/curves_long.tsv", out);
  EXPECT(exists(path));

  /* Refusals: *summary_json is NULL after each, the message names the culprit. */
  summary = (char*)options; /* a stale value the call must clear */
  EXPECT(cpx_dataset_run(deriv, out, "subject", NULL, NULL, NULL, &summary) == CPX_ERR_ARGUMENT && summary == NULL);
  EXPECT(strstr(cpx_last_error(), "\"subject\""));
  EXPECT(cpx_dataset_run(deriv, out, "participant", "{\"atlass\": \"x\"}", NULL, NULL, &summary) == CPX_ERR_ARGUMENT);
  EXPECT(strstr(cpx_last_error(), "atlass"));
  EXPECT(cpx_dataset_run(NULL, out, "group", NULL, NULL, NULL, &summary) == CPX_ERR_ARGUMENT);
  EXPECT(strstr(cpx_last_error(), "derivatives_dir"));
  EXPECT(cpx_dataset_run(deriv, out, "group", NULL, NULL, NULL, NULL) == CPX_ERR_ARGUMENT);
  snprintf(path, sizeof path, "%s/absent", dir);
  EXPECT(cpx_dataset_run(path, out, "participant", NULL, NULL, NULL, &summary) == CPX_ERR_IO);
  EXPECT(strstr(cpx_last_error(), "absent") && summary == NULL);
  EXPECT(cpx_dataset_run(deriv, path, "group", NULL, NULL, NULL, &summary) == CPX_ERR_IO);

  char command[600];
  snprintf(command, sizeof command, "rm -rf '%s'", dir);
  if (system(command) != 0) failures++;
  if (failures) fprintf(stderr, "%d failed expectations\n", failures);
  return failures ? 1 : 0;
}
