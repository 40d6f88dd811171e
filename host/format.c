// SPDX-License-Identifier: GPL-3.0-or-later
#include "format.h"

#include <stdio.h>
#include <string.h>
#include <strings.h>

#include "text.h"
#include "vernier.h"

typedef struct {
  const char *name;
  int value;
} Name;

// What --format accepts (the contract's lists), in the order of its help.
static const Name containers[] = {
    {"wav", SF_FORMAT_WAV},   {"wavex", SF_FORMAT_WAVEX},
    {"w64", SF_FORMAT_W64},   {"rf64", SF_FORMAT_RF64},
    {"aiff", SF_FORMAT_AIFF}, {"caf", SF_FORMAT_CAF},
    {"flac", SF_FORMAT_FLAC}, {"ogg", SF_FORMAT_OGG},
};
static const Name encodings[] = {
    {"pcm16", SF_FORMAT_PCM_16},  {"pcm24", SF_FORMAT_PCM_24},
    {"pcm32", SF_FORMAT_PCM_32},  {"float", SF_FORMAT_FLOAT},
    {"double", SF_FORMAT_DOUBLE}, {"vorbis", SF_FORMAT_VORBIS},
};
// Only for naming an input's own format, which is kept as it is.
static const Name other_containers[] = {
    {"au", SF_FORMAT_AU},       {"raw", SF_FORMAT_RAW},
    {"paf", SF_FORMAT_PAF},     {"svx", SF_FORMAT_SVX},
    {"nist", SF_FORMAT_NIST},   {"voc", SF_FORMAT_VOC},
    {"ircam", SF_FORMAT_IRCAM}, {"mat4", SF_FORMAT_MAT4},
    {"mat5", SF_FORMAT_MAT5},   {"pvf", SF_FORMAT_PVF},
    {"xi", SF_FORMAT_XI},       {"htk", SF_FORMAT_HTK},
    {"sds", SF_FORMAT_SDS},     {"avr", SF_FORMAT_AVR},
    {"sd2", SF_FORMAT_SD2},     {"wve", SF_FORMAT_WVE},
    {"mpc2k", SF_FORMAT_MPC2K}, {"mpeg", SF_FORMAT_MPEG},
};
static const Name other_encodings[] = {
    {"pcms8", SF_FORMAT_PCM_S8},
    {"pcmu8", SF_FORMAT_PCM_U8},
    {"ulaw", SF_FORMAT_ULAW},
    {"alaw", SF_FORMAT_ALAW},
    {"ima-adpcm", SF_FORMAT_IMA_ADPCM},
    {"ms-adpcm", SF_FORMAT_MS_ADPCM},
    {"gsm610", SF_FORMAT_GSM610},
    {"vox-adpcm", SF_FORMAT_VOX_ADPCM},
    {"g721", SF_FORMAT_G721_32},
    {"g723-24", SF_FORMAT_G723_24},
    {"g723-40", SF_FORMAT_G723_40},
    {"dwvw12", SF_FORMAT_DWVW_12},
    {"dwvw16", SF_FORMAT_DWVW_16},
    {"dwvw24", SF_FORMAT_DWVW_24},
    {"dpcm8", SF_FORMAT_DPCM_8},
    {"dpcm16", SF_FORMAT_DPCM_16},
    {"opus", SF_FORMAT_OPUS},
    {"alac16", SF_FORMAT_ALAC_16},
    {"alac20", SF_FORMAT_ALAC_20},
    {"alac24", SF_FORMAT_ALAC_24},
    {"alac32", SF_FORMAT_ALAC_32},
    {"mp1", SF_FORMAT_MPEG_LAYER_I},
    {"mp2", SF_FORMAT_MPEG_LAYER_II},
    {"mp3", SF_FORMAT_MPEG_LAYER_III},
    {"nms-adpcm16", SF_FORMAT_NMS_ADPCM_16},
    {"nms-adpcm24", SF_FORMAT_NMS_ADPCM_24},
    {"nms-adpcm32", SF_FORMAT_NMS_ADPCM_32},
};
// OUT's extension, when it names a container.
static const Name extensions[] = {
    {"wav", SF_FORMAT_WAV},   {"wave", SF_FORMAT_WAV}, {"w64", SF_FORMAT_W64},
    {"rf64", SF_FORMAT_RF64}, {"aif", SF_FORMAT_AIFF}, {"aiff", SF_FORMAT_AIFF},
    {"aifc", SF_FORMAT_AIFF}, {"caf", SF_FORMAT_CAF},  {"flac", SF_FORMAT_FLAC},
    {"ogg", SF_FORMAT_OGG},   {"oga", SF_FORMAT_OGG},
};

#define COUNT(a) (sizeof(a) / sizeof((a)[0]))

static const char *name_of(const Name *names, size_t n, int value) {
  for (size_t i = 0; i < n; ++i) {
    if (names[i].value == value) {
      return names[i].name;
    }
  }
  return NULL;
}

static int value_of(const Name *names, size_t n, const char *name,
                    size_t length) {
  for (size_t i = 0; i < n; ++i) {
    if (strlen(names[i].name) == length &&
        strncasecmp(names[i].name, name, length) == 0) {
      return names[i].value;
    }
  }
  return 0;
}

static bool accepted(const SF_INFO *input, int format) {
  SF_INFO info = {.samplerate = input->samplerate,
                  .channels = input->channels,
                  .format = format};
  return sf_format_check(&info) != 0;
}

void vn_format_name(int format, char *buf, size_t size) {
  const int major = format & SF_FORMAT_TYPEMASK;
  const int sub = format & SF_FORMAT_SUBMASK;
  const char *c = name_of(containers, COUNT(containers), major);
  const char *e = name_of(encodings, COUNT(encodings), sub);
  c = c ? c : name_of(other_containers, COUNT(other_containers), major);
  e = e ? e : name_of(other_encodings, COUNT(other_encodings), sub);
  char c_hex[16], e_hex[16];
  snprintf(c_hex, sizeof c_hex, "0x%x", (unsigned)major);
  snprintf(e_hex, sizeof e_hex, "0x%x", (unsigned)sub);
  snprintf(buf, size, "%s:%s", c ? c : c_hex, e ? e : e_hex);
}

// "flac:pcm16 or flac:pcm24": the encodings of ours the container takes.
static size_t list_encodings(const SF_INFO *input, int major, VnText *t,
                             int *only) {
  size_t n = 0;
  const char *container = name_of(containers, COUNT(containers), major);
  for (size_t i = 0; i < COUNT(encodings); ++i) {
    if (accepted(input, major | encodings[i].value)) {
      vn_text_append(t, "%s%s:%s", n ? " or " : "", container,
                     encodings[i].name);
      *only = encodings[i].value;
      ++n;
    }
  }
  return n;
}

static int choose_from_option(const SF_INFO *input, const char *option,
                              int *format) {
  const char *colon = strchr(option, ':');
  const size_t c_length = colon ? (size_t)(colon - option) : strlen(option);
  const int major = value_of(containers, COUNT(containers), option, c_length);
  if (!major) {
    vn_error("--format %s: no container '%.*s'; containers: wav, wavex, w64, "
             "rf64, aiff, caf, flac, ogg",
             option, (int)c_length, option);
    return VN_EXIT_USAGE;
  }
  int sub = 0;
  if (colon) {
    sub = value_of(encodings, COUNT(encodings), colon + 1, strlen(colon + 1));
    if (!sub) {
      vn_error("--format %s: no encoding '%s'; encodings: pcm16, pcm24, "
               "pcm32, float, double (vorbis for ogg)",
               option, colon + 1);
      return VN_EXIT_USAGE;
    }
  } else {
    sub = input->format & SF_FORMAT_SUBMASK;
  }
  if (accepted(input, major | sub)) {
    *format = major | sub;
    return VN_EXIT_OK;
  }
  VnText t = {0};
  int only = 0;
  const size_t n = list_encodings(input, major, &t, &only);
  if (!colon && n == 1) {
    // A container with one encoding (ogg: vorbis) needs no second word.
    *format = major | only;
    vn_text_free(&t);
    return VN_EXIT_OK;
  }
  char have[64];
  vn_format_name(major | sub, have, sizeof have);
  vn_error("--format %s: libsndfile cannot write %s (%d %s, %d Hz); %s%s",
           option, have, input->channels,
           input->channels == 1 ? "channel" : "channels", input->samplerate,
           n ? "use --format " : "choose another container", vn_text_get(&t));
  vn_text_free(&t);
  return VN_EXIT_USAGE;
}

int vn_format_choose(const SF_INFO *input, const char *option,
                     const char *out_path, int *format) {
  if (option) {
    return choose_from_option(input, option, format);
  }
  const int in_major = input->format & SF_FORMAT_TYPEMASK;
  const int in_sub = input->format & SF_FORMAT_SUBMASK;
  const char *base = strrchr(out_path, '/');
  base = base ? base + 1 : out_path;
  const char *dot = strrchr(base, '.');
  int major =
      dot ? value_of(extensions, COUNT(extensions), dot + 1, strlen(dot + 1))
          : 0;
  // WAVEX and RF64 files are named .wav too: that is not another container.
  if (major == SF_FORMAT_WAV &&
      (in_major == SF_FORMAT_WAVEX || in_major == SF_FORMAT_RF64)) {
    major = in_major;
  }
  if (!major || major == in_major) {
    if (accepted(input, input->format)) {
      *format = input->format;
      return VN_EXIT_OK;
    }
    char have[64];
    vn_format_name(input->format, have, sizeof have);
    vn_error("%s: libsndfile cannot write the input's own format (%s); "
             "choose one with --format CONTAINER:ENCODING",
             out_path, have);
    return VN_EXIT_USAGE;
  }
  if (accepted(input, major | in_sub)) {
    *format = major | in_sub;
    return VN_EXIT_OK;
  }
  VnText t = {0};
  int only = 0;
  const size_t n = list_encodings(input, major, &t, &only);
  char have[64];
  vn_format_name(input->format, have, sizeof have);
  vn_error("%s: %s cannot hold the input's encoding (%s); use --format %s",
           out_path, name_of(containers, COUNT(containers), major), have,
           n ? vn_text_get(&t) : "with another container");
  vn_text_free(&t);
  return VN_EXIT_USAGE;
}

int vn_format_pcm_bits(int format) {
  switch (format & SF_FORMAT_SUBMASK) {
  case SF_FORMAT_PCM_S8:
  case SF_FORMAT_PCM_U8:
    return 8;
  case SF_FORMAT_PCM_16:
    return 16;
  case SF_FORMAT_PCM_24:
    return 24;
  case SF_FORMAT_PCM_32:
    return 32;
  default:
    return 0;
  }
}

bool vn_format_is_fixed_point(int format) {
  switch (format & SF_FORMAT_SUBMASK) {
  case SF_FORMAT_FLOAT:
  case SF_FORMAT_DOUBLE:
  case SF_FORMAT_VORBIS:
  case SF_FORMAT_OPUS:
  case SF_FORMAT_MPEG_LAYER_I:
  case SF_FORMAT_MPEG_LAYER_II:
  case SF_FORMAT_MPEG_LAYER_III:
    return false; // float inside: values beyond full scale are kept
  default:
    return true;
  }
}
