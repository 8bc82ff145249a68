/* cpx_series_read_image from C99 with the public header only: a tiny NIfTI-1 image and
 * label image written byte by byte (invented values), labels_path NULL (refused for a
 * NIfTI image, which needs labels), the options "label_map" and "memory_budget_mb", and
 * outputs set to NULL on failure. */
#define _POSIX_C_SOURCE 200809L /* mkdtemp */
#include <critplex/critplex.h>

#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "check.h"

/* NIfTI-1, little-endian: 2 x 2 x 1 voxels, `frames` frames (float32) or one int16 volume. */
static void write_nifti(const char* path, int frames, const float* values, const int16_t* labels) {
  unsigned char h[352];
  memset(h, 0, sizeof h);
  int32_t size = 348;
  memcpy(h, &size, 4);
  int16_t dim[8] = {(int16_t)(frames ? 4 : 3), 2, 2, 1, (int16_t)(frames ? frames : 1), 1, 1, 1};
  memcpy(h + 40, dim, sizeof dim);
  int16_t datatype = frames ? 16 : 4, bitpix = frames ? 32 : 16;
  memcpy(h + 70, &datatype, 2);
  memcpy(h + 72, &bitpix, 2);
  float pixdim[8] = {1, 2, 2, 2, 0.5f, 0, 0, 0}, offset = 352;
  memcpy(h + 76, pixdim, sizeof pixdim);
  memcpy(h + 108, &offset, 4);
  h[123] = 2 | 8; /* mm, seconds */
  memcpy(h + 344, "n+1", 4);
  FILE* f = fopen(path, "wb");
  fwrite(h, 1, sizeof h, f);
  if (frames) fwrite(values, sizeof(float), (size_t)(4 * frames), f);
  else fwrite(labels, sizeof(int16_t), 4, f);
  fclose(f);
}

int main(void) {
  char dir[] = "/tmp/critplex-capi-image-XXXXXX";
  if (!mkdtemp(dir)) return 1;
  char image[128], labels[128];
  snprintf(image, sizeof image, "%s/bold.nii", dir);
  snprintf(labels, sizeof labels, "%s/atlas.nii", dir);
  enum { T = 6 };
  float values[4 * T];
  for (int t = 0; t < T; ++t)
    for (int v = 0; v < 4; ++v) values[4 * t + v] = (float)(v * v + (t % 3) * (v + 1) + t);
  const int16_t atlas[4] = {1, 3, 3, 1};
  write_nifti(image, T, values, NULL);
  write_nifti(labels, 0, NULL, atlas);

  cpx_series* s = NULL;
  EXPECT(cpx_series_read_image(image, labels, "{\"memory_budget_mb\": 16}", &s) == CPX_OK);
  size_t frames = 0, regions = 0;
  EXPECT(cpx_series_shape(s, &frames, &regions) == CPX_OK && frames == T && regions == 2);
  double out[2 * T];
  EXPECT(cpx_series_copy(s, out, 2 * T, CPX_ROW_MAJOR) == CPX_OK);
  /* label 1 = voxels 0 and 3, label 3 = voxels 1 and 2 */
  EXPECT(out[0] == (values[0] + values[3]) / 2 && out[1] == (values[1] + values[2]) / 2);
  double dt = 0;
  EXPECT(cpx_series_sampling_interval(s, &dt) == CPX_OK && dt == 0.5);
  cpx_series_free(s);

  /* A NIfTI image needs labels: labels_path NULL is refused, and *out is NULL after. */
  s = (cpx_series*)&frames; /* a stale value the call must clear */
  EXPECT(cpx_series_read_image(image, NULL, NULL, &s) == CPX_ERR_ARGUMENT && s == NULL);
  EXPECT(strstr(cpx_last_error(), "bold.nii") && strstr(cpx_last_error(), "need a label image"));
  EXPECT(cpx_series_read_image(NULL, labels, NULL, &s) == CPX_ERR_ARGUMENT && strstr(cpx_last_error(), "image_path"));
  EXPECT(cpx_series_read_image(image, labels, NULL, NULL) == CPX_ERR_ARGUMENT && strstr(cpx_last_error(), "'out'"));
  EXPECT(cpx_series_read_image(image, labels, "{\"memory_budget_mb\": 0}", &s) == CPX_ERR_ARGUMENT && s == NULL);
  EXPECT(strstr(cpx_last_error(), "memory_budget_mb"));
  EXPECT(cpx_series_read_image(image, labels, "{\"label_map\": null}", &s) == CPX_ERR_ARGUMENT);
  EXPECT(strstr(cpx_last_error(), "label_map"));
  EXPECT(cpx_series_read_image(image, labels, "{\"label_map\": \"x\"}", &s) == CPX_ERR_ARGUMENT);
  EXPECT(strstr(cpx_last_error(), "applies to CIFTI label files"));
  EXPECT(cpx_series_read_image(image, labels, "{\"labels\": 1}", &s) == CPX_ERR_ARGUMENT && strstr(cpx_last_error(), "labels"));
  /* 1 MiB is plenty for this image. */
  EXPECT(cpx_series_read_image(image, labels, "{\"memory_budget_mb\": 1}", &s) == CPX_OK);
  cpx_series_free(s);

  unlink(image);
  unlink(labels);
  rmdir(dir);
  if (failures) fprintf(stderr, "%d failure(s)\n", failures);
  return failures ? 1 : 0;
}
