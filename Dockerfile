# matchbench: a two-stage build. The first stage compiles a static binary
# (the SQLite driver is pure Go, so no cgo); the second holds only that
# binary. This file has not been built on the development machines, which
# have no Docker engine; keep it simple.
FROM golang:1.26-bookworm AS build
WORKDIR /src
COPY go.mod go.sum ./
RUN go mod download
COPY . .
RUN CGO_ENABLED=0 go build -trimpath -ldflags='-s -w' -o /out/matchbench .

FROM gcr.io/distroless/static-debian12:nonroot
COPY --from=build /out/matchbench /matchbench
VOLUME ["/data"]
EXPOSE 8080
# Inside a container the app must listen on all interfaces to be reached;
# publish the port only to the host or the lab network you intend.
ENTRYPOINT ["/matchbench", "serve", "--listen", "0.0.0.0:8080", "--data", "/data"]
