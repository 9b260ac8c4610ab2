/* Example rig firmware for loopwright's rig protocol; see rig_firmware.h and io/rig_protocol.md. */
#include "rig_firmware.h"

#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "rig_platform.h"

#define MAX_FIELDS 8

/* ---- CRC and sending ------------------------------------------------------------------------ */

uint16_t rig_crc16(const char* bytes, size_t count) {
  uint16_t crc = 0xFFFF;
  size_t i;
  int bit;
  for (i = 0; i < count; ++i) {
    crc ^= (uint16_t)((unsigned char)bytes[i] << 8);
    for (bit = 0; bit < 8; ++bit) {
      crc = (crc & 0x8000) ? (uint16_t)((crc << 1) ^ 0x1021) : (uint16_t)(crc << 1);
    }
  }
  return crc;
}

/* Sends "BODY *CRC\n" where BODY = "<word> <seq><fields>". */
static void send_line(struct rig_firmware* rig, const char* word, const char* fields) {
  char line[RIG_LINE_MAX + 2];
  int n = snprintf(line, sizeof line - 7, "%s %lu%s", word, (unsigned long)rig->seq, fields);
  if (n < 0 || (size_t)n >= sizeof line - 7) return; /* cannot happen with the texts below */
  n += snprintf(line + n, 8, " *%04X\n", (unsigned)rig_crc16(line, (size_t)n));
  rig_platform_write(line, (size_t)n);
  ++rig->seq;
}

static void send_ok(struct rig_firmware* rig, unsigned long acked) {
  char fields[16];
  snprintf(fields, sizeof fields, " %lu", acked);
  send_line(rig, "ok", fields);
}

static void send_err(struct rig_firmware* rig, unsigned long acked, const char* code,
                     const char* text) {
  char fields[RIG_LINE_MAX];
  snprintf(fields, sizeof fields, " %lu %s %s", acked, code, text);
  send_line(rig, "err", fields);
}

static const char* mode_word(enum rig_mode mode) {
  switch (mode) {
    case RIG_MODE_OPEN:
      return "open";
    case RIG_MODE_CLOSED:
      return "closed";
    case RIG_MODE_SAFE:
      return "safe";
    default:
      return "idle";
  }
}

/* Changes mode and reports it; leaving closed loop drops the controller. */
static void set_mode(struct rig_firmware* rig, enum rig_mode mode, const char* why) {
  char fields[48];
  if (rig->mode == mode) return;
  rig->mode = mode;
  if (mode == RIG_MODE_SAFE || mode == RIG_MODE_IDLE) {
    rig->actuator = rig->config.safe_value;
    rig_platform_set_actuator(rig->actuator);
  }
  snprintf(fields, sizeof fields, " %s%s%s", mode_word(mode), why[0] ? " " : "", why);
  send_line(rig, "state", fields);
}

/* ---- Numbers -------------------------------------------------------------------------------- */

static int parse_real(const char* text, double* out) {
  char* end;
  double value;
  const char* p;
  if (text[0] == '\0' || text[0] == '+') return 0;
  for (p = text; *p; ++p) { /* what %.9g prints: no blanks, hex, inf or nan */
    if (!((*p >= '0' && *p <= '9') || *p == '-' || *p == '+' || *p == '.' || *p == 'e' ||
          *p == 'E')) {
      return 0;
    }
  }
  errno = 0;
  value = strtod(text, &end);
  if (*end != '\0' || errno == ERANGE || !isfinite(value)) return 0;
  *out = value;
  return 1;
}

static int parse_seq(const char* text, unsigned long* out) {
  const char* p;
  unsigned long value = 0;
  if (text[0] == '\0' || (text[0] == '0' && text[1] != '\0') || strlen(text) > 10) return 0;
  for (p = text; *p; ++p) {
    if (*p < '0' || *p > '9') return 0;
    value = value * 10 + (unsigned long)(*p - '0');
  }
  if (value > 0xFFFFFFFFul) return 0;
  *out = value;
  return 1;
}

static double clamp(const struct rig_firmware* rig, double u) {
  if (u < rig->config.actuator_lo) return rig->config.actuator_lo;
  if (u > rig->config.actuator_hi) return rig->config.actuator_hi;
  return u;
}

/* ---- Controller ----------------------------------------------------------------------------- */

/* Bilinear transform s = c (1 - z^-1) / (1 + z^-1), c = 2 / T, of p2 s^2 + p1 s + p0 times
 * (1 + z^-1)^order, order the larger degree of numerator and denominator. */
static void bilinear(const double p[3], int order, double c, double out[3]) {
  if (order == 0) {
    out[0] = p[0];
    out[1] = out[2] = 0.0;
  } else if (order == 1) {
    out[0] = p[1] * c + p[0];
    out[1] = p[0] - p[1] * c;
    out[2] = 0.0;
  } else {
    out[0] = p[2] * c * c + p[1] * c + p[0];
    out[1] = 2.0 * p[0] - 2.0 * p[2] * c * c;
    out[2] = p[2] * c * c - p[1] * c + p[0];
  }
}

/* Parses p, pi:Z, lead:Z:P, pid:Z1:Z2:P (rad/s; P > 0) into a discrete controller with gain K.
 * Returns 0 on a syntax error. */
static int make_controller(struct rig_firmware* rig, char* text, double gain) {
  double v[3] = {0.0, 0.0, 0.0};
  double num[3] = {0.0, 0.0, 0.0}, den[3] = {0.0, 0.0, 0.0};
  int count = 0, order, i;
  char* colon = strchr(text, ':');
  const double c = 2.0e6 / (double)rig->config.period_us;
  struct rig_controller* k = &rig->controller;
  while (colon) {
    char* next;
    *colon = '\0';
    if (count == 3) return 0;
    next = strchr(colon + 1, ':');
    if (next) *next = '\0';
    if (!parse_real(colon + 1, &v[count])) return 0;
    ++count;
    if (next) *next = ':';
    colon = next;
  }
  if (strcmp(text, "p") == 0 && count == 0) {
    num[0] = 1.0;
    den[0] = 1.0;
    order = 0;
  } else if (strcmp(text, "pi") == 0 && count == 1) {
    num[1] = 1.0, num[0] = v[0];
    den[1] = 1.0;
    order = 1;
  } else if (strcmp(text, "lead") == 0 && count == 2 && v[1] > 0.0) {
    num[1] = 1.0, num[0] = v[0];
    den[1] = 1.0, den[0] = v[1];
    order = 1;
  } else if (strcmp(text, "pid") == 0 && count == 3 && v[2] > 0.0) {
    num[2] = 1.0, num[1] = v[0] + v[1], num[0] = v[0] * v[1];
    den[2] = 1.0, den[1] = v[2];
    order = 2;
  } else {
    return 0;
  }
  bilinear(num, order, c, k->b);
  bilinear(den, order, c, k->a);
  for (i = 2; i >= 0; --i) {
    k->b[i] = gain * k->b[i] / k->a[0];
    k->a[i] /= k->a[0];
  }
  k->started = 0;
  return 1;
}

static double run_controller(struct rig_firmware* rig, double e) {
  struct rig_controller* k = &rig->controller;
  double u;
  if (!k->started) { /* start from where the actuator is, as if the error had been steady */
    k->e[0] = k->e[1] = e;
    k->u[0] = k->u[1] = rig->actuator;
    k->started = 1;
  }
  u = k->b[0] * e + k->b[1] * k->e[0] + k->b[2] * k->e[1] - k->a[1] * k->u[0] - k->a[2] * k->u[1];
  u = isfinite(u) ? clamp(rig, u) : rig->config.safe_value;
  k->e[1] = k->e[0];
  k->e[0] = e;
  k->u[1] = k->u[0];
  k->u[0] = u;
  return u;
}

/* ---- Host lines ----------------------------------------------------------------------------- */

static void handle_message(struct rig_firmware* rig, char** f, int n, unsigned long seq) {
  const char* w = f[0];
  double x, y;
  char fields[RIG_LINE_MAX];
  if (strcmp(w, "hello") == 0 && n == 3) {
    if (strcmp(f[2], "1") != 0) {
      send_err(rig, seq, "version", "only protocol version 1 is spoken here");
      return;
    }
    snprintf(fields, sizeof fields, " %d %lu %.9g %.9g %.9g %lu %s", RIG_PROTOCOL_VERSION,
             (unsigned long)rig->config.period_us, rig->config.actuator_lo, rig->config.actuator_hi,
             rig->config.safe_value, (unsigned long)rig->config.watchdog_ms, rig->config.name);
    send_line(rig, "caps", fields);
  } else if (strcmp(w, "u") == 0 && n == 3 && parse_real(f[2], &x)) {
    if (x < rig->config.actuator_lo || x > rig->config.actuator_hi) {
      send_err(rig, seq, "range", "value outside the actuator range");
      return;
    }
    rig->open_value = x;
    send_ok(rig, seq);
    set_mode(rig, RIG_MODE_OPEN, "");
  } else if (strcmp(w, "loop") == 0 && n == 5 && parse_real(f[3], &x) && parse_real(f[4], &y)) {
    if (!(x > 0.0)) {
      send_err(rig, seq, "range", "gain must be more than 0");
    } else if (!make_controller(rig, f[2], x)) {
      send_err(rig, seq, "controller", "expected p, pi:Z, lead:Z:P or pid:Z1:Z2:P");
    } else {
      rig->reference = y;
      send_ok(rig, seq);
      set_mode(rig, RIG_MODE_CLOSED, "");
    }
  } else if (strcmp(w, "ref") == 0 && n == 3 && parse_real(f[2], &x)) {
    if (rig->mode != RIG_MODE_CLOSED) {
      send_err(rig, seq, "mode", "ref needs closed-loop mode");
      return;
    }
    rig->reference = x;
    send_ok(rig, seq);
  } else if (n == 2 && (strcmp(w, "go") == 0 || strcmp(w, "halt") == 0)) {
    if (w[0] == 'g' && !rig->streaming) rig->next_sample_us = rig->now_us;
    rig->streaming = w[0] == 'g';
    send_ok(rig, seq);
  } else if (strcmp(w, "safe") == 0 && n == 2) {
    send_ok(rig, seq);
    set_mode(rig, RIG_MODE_SAFE, "safe stop");
  } else if (strcmp(w, "beat") == 0 && n == 2) {
    send_ok(rig, seq);
  } else {
    send_err(rig, seq, "syntax", "unknown message or wrong fields");
  }
}

static void handle_line(struct rig_firmware* rig, char* line, size_t length) {
  char* f[MAX_FIELDS];
  int n = 0;
  size_t i;
  unsigned long seq = 0;
  char* p;
  if (length > 0 && line[length - 1] == '\r') line[--length] = '\0';
  /* SEQ, when one can be read, names the refused line. */
  p = strchr(line, ' ');
  if (p) {
    char digits[12];
    size_t k = 0;
    ++p;
    while (k + 1 < sizeof digits && p[k] >= '0' && p[k] <= '9') digits[k] = p[k], ++k;
    digits[k] = '\0';
    if (!parse_seq(digits, &seq)) seq = 0;
  }
  if (rig->in_overflow || length > RIG_LINE_MAX) {
    send_err(rig, seq, "syntax", "line longer than 200 bytes");
    return;
  }
  if (length < 8 || line[length - 6] != ' ' || line[length - 5] != '*') {
    send_err(rig, seq, "syntax", "no CRC");
    return;
  }
  {
    unsigned long crc;
    char* end;
    const char* hex = line + length - 4;
    for (i = 0; i < 4; ++i) {
      if (!((hex[i] >= '0' && hex[i] <= '9') || (hex[i] >= 'A' && hex[i] <= 'F'))) {
        send_err(rig, seq, "syntax", "no CRC");
        return;
      }
    }
    crc = strtoul(hex, &end, 16);
    length -= 6;
    line[length] = '\0';
    if (crc != rig_crc16(line, length)) {
      send_err(rig, seq, "crc", "CRC does not match the line");
      return;
    }
  }
  /* Split at single spaces. */
  f[n++] = line;
  for (i = 0; i < length; ++i) {
    if (line[i] != ' ') continue;
    line[i] = '\0';
    if (n == MAX_FIELDS) break;
    f[n++] = line + i + 1;
  }
  for (i = 0; i < (size_t)n; ++i) {
    if (f[i][0] == '\0') break;
  }
  if (i < (size_t)n || n < 2 || !parse_seq(f[1], &seq)) {
    send_err(rig, seq, "syntax", "expected WORD SEQ FIELD... with single spaces");
    return;
  }
  rig->last_host_us = rig->now_us; /* any valid host line is a heartbeat */
  handle_message(rig, f, n, seq);
}

/* ---- Main loop ------------------------------------------------------------------------------ */

void rig_init(struct rig_firmware* rig, const struct rig_config* config) {
  memset(rig, 0, sizeof *rig);
  rig->config = *config;
  rig->mode = RIG_MODE_IDLE;
  rig->last_micros = rig_platform_micros();
  rig->actuator = config->safe_value;
  rig_platform_set_actuator(rig->actuator);
}

static void take_sample(struct rig_firmware* rig) {
  const double y = rig_platform_read_output();
  double u = rig->config.safe_value;
  if (rig->mode == RIG_MODE_OPEN) u = rig->open_value;
  if (rig->mode == RIG_MODE_CLOSED) u = run_controller(rig, rig->reference - y);
  rig->actuator = u;
  rig_platform_set_actuator(u);
  if (rig->streaming) {
    char fields[96];
    snprintf(fields, sizeof fields, " %llu %.9g %.9g %.9g", (unsigned long long)rig->now_us,
             rig->reference, u, y);
    send_line(rig, "s", fields);
  }
}

void rig_poll(struct rig_firmware* rig) {
  int byte;
  const uint32_t micros = rig_platform_micros();
  rig->now_us += (uint32_t)(micros - rig->last_micros); /* wraps correctly */
  rig->last_micros = micros;

  while ((byte = rig_platform_read_byte()) >= 0) {
    if (byte == '\n') {
      rig->in[rig->in_length] = '\0';
      handle_line(rig, rig->in, rig->in_length);
      rig->in_length = 0;
      rig->in_overflow = 0;
    } else if (rig->in_length < RIG_LINE_MAX + 1) {
      rig->in[rig->in_length++] = (char)byte;
    } else {
      rig->in_overflow = 1;
    }
  }

  if ((rig->mode == RIG_MODE_OPEN || rig->mode == RIG_MODE_CLOSED) &&
      rig->now_us - rig->last_host_us > (uint64_t)rig->config.watchdog_ms * 1000u) {
    rig->streaming = 0;
    set_mode(rig, RIG_MODE_SAFE, "watchdog");
  }

  if (rig->now_us >= rig->next_sample_us) {
    take_sample(rig);
    rig->next_sample_us += rig->config.period_us;
    if (rig->next_sample_us <= rig->now_us) { /* fell behind: skip, never burst */
      rig->next_sample_us = rig->now_us + rig->config.period_us;
    }
  }
}
