# lipidsvc container image.
#
# Two stages: a full Go toolchain builds one static binary (CGO off, so it
# links against nothing), and a distroless "static" image runs it. The
# runtime image has no shell, no package manager and no libc; it holds the
# binary, CA certificates, tzdata and /etc/passwd entries for "nonroot".
# All reference data is embedded in the binary, so nothing else is copied.
#
# Needs BuildKit (the default builder since Docker 23) for RUN --mount.
# Build:   docker build -t lipidsvc:dev .
# Run:     docker run --rm -p 8080:8080 -p 9090:9090 lipidsvc:dev

ARG GO_VERSION=1.27.3

############################
# Build stage
############################
# BUILDPLATFORM/TARGETOS/TARGETARCH let `docker buildx build --platform ...`
# cross-compile natively instead of emulating the target CPU; CGO is off so
# cross-compiling needs no C toolchain.
FROM --platform=$BUILDPLATFORM golang:${GO_VERSION}-bookworm AS build

WORKDIR /src

ENV CGO_ENABLED=0 \
    GOFLAGS=-mod=readonly

# Dependencies first, in their own layer: this layer is reused until go.mod
# or go.sum change, so editing source code does not download modules again.
COPY go.mod go.sum ./
RUN go mod download && go mod verify

# Then the sources (.dockerignore keeps out .git, deploy/, editor files ...).
COPY . .

ARG TARGETOS
ARG TARGETARCH
# The build cache is a BuildKit cache mount: it speeds up rebuilds without
# ending up in any image layer.
RUN --mount=type=cache,target=/root/.cache/go-build \
    GOOS=${TARGETOS:-linux} GOARCH=${TARGETARCH} \
    go build -trimpath -ldflags="-s -w" -o /out/lipidsvc .

############################
# Runtime stage
############################
FROM gcr.io/distroless/static-debian12:nonroot

ARG VERSION=dev
ARG REVISION=unknown

LABEL org.opencontainers.image.title="lipidsvc" \
      org.opencontainers.image.description="fatty-acid profile calculations for edible-oil refineries" \
      org.opencontainers.image.source="https://example.invalid/lipidsvc" \
      org.opencontainers.image.version="${VERSION}" \
      org.opencontainers.image.revision="${REVISION}"

COPY --from=build /out/lipidsvc /lipidsvc

# Listen on all interfaces inside the container; both can be overridden.
ENV LIPIDSVC_ADDR=:8080 \
    LIPIDSVC_METRICS_ADDR=:9090

# 8080: JSON API plus /healthz and /readyz.  9090: Prometheus /metrics.
EXPOSE 8080 9090

# uid/gid 65532 is "nonroot" in distroless. Numeric, so that Kubernetes'
# runAsNonRoot check can verify it without reading /etc/passwd.
USER 65532:65532

# No HEALTHCHECK: a Docker HEALTHCHECK runs a command *inside* the container
# (e.g. curl or wget), and this image deliberately has no shell and no such
# binary. Health is checked from outside instead: Kubernetes liveness
# (/healthz), readiness (/readyz) and startup probes, see deploy/base.
# The binary handles SIGTERM itself (readiness goes 503, in-flight requests
# finish, then it exits), so the default stop signal is the right one.
STOPSIGNAL SIGTERM

ENTRYPOINT ["/lipidsvc"]
