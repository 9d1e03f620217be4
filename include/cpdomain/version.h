/* version.h: the version of cpdomain, stored with every saved fit. */
#ifndef CPDOMAIN_VERSION_H
#define CPDOMAIN_VERSION_H
#define CPDOMAIN_VERSION "0.1.0"
#endif
