package main

import (
	"context"
	"errors"
	"fmt"
	"net"
	"net/http"
	"os/signal"
	"syscall"
	"time"

	"github.com/spf13/cobra"

	"github.com/gainsay/gainsay"
	"github.com/gainsay/gainsay/nli"
	"github.com/gainsay/gainsay/serve"
)

func newServeCmd() *cobra.Command {
	var (
		mf        modelFlags
		addr      string
		cfg       serve.Config
		occlusion string
		grace     time.Duration
	)
	c := &cobra.Command{
		Use:   "serve",
		Short: "Keep the model loaded and score replies over HTTP for a live training loop",
		Long: `serve listens (on loopback by default) and answers:

  POST /v1/check  {"profile": {"character", "facts": [{"id", "text"}]}, "replies": [{"id", "text"}], "threshold"?}
                  -> {"model", "records": [...]}, one record per reply, as gainsay check writes them
  GET  /healthz   -> {"status": "ok", "model", "inflight", ...}

Concurrent requests share ONNX Runtime runs (at most --max-batch pairs, gathered for at most --max-wait).
At most --max-inflight requests are worked on at once; others get 503 with Retry-After. Bodies over
--max-body-bytes get 413. On SIGINT or SIGTERM the service stops accepting, finishes the requests in
flight (for up to --grace) and exits.`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			how, err := nli.ParseOcclusion(occlusion)
			if err != nil {
				return unusable(err)
			}
			cfg.Occlusion = how
			model, name, err := mf.open(cmd)
			if err != nil {
				return err
			}
			defer model.Close()
			ln, err := net.Listen("tcp", addr)
			if err != nil {
				return unusable(err)
			}
			svc := serve.New(model, name, cfg)
			srv := &http.Server{Handler: svc.Handler(), ReadHeaderTimeout: 10 * time.Second}
			ctx, stop := signal.NotifyContext(cmd.Context(), syscall.SIGINT, syscall.SIGTERM)
			defer stop()
			errc := make(chan error, 1)
			go func() { errc <- srv.Serve(ln) }()
			fmt.Fprintf(cmd.ErrOrStderr(), "gainsay: serving %s on http://%s\n", name, ln.Addr())
			select {
			case err := <-errc:
				svc.Close()
				return err
			case <-ctx.Done():
			}
			fmt.Fprintln(cmd.ErrOrStderr(), "gainsay: shutting down, finishing requests in flight")
			sctx, cancel := context.WithTimeout(context.Background(), grace)
			defer cancel()
			err = srv.Shutdown(sctx)
			svc.Close()
			if err != nil && !errors.Is(err, http.ErrServerClosed) {
				return err
			}
			fmt.Fprintln(cmd.ErrOrStderr(), "gainsay: stopped")
			return nil
		},
	}
	mf.register(c)
	f := c.Flags()
	f.StringVar(&addr, "addr", "127.0.0.1:8734", "address to listen on (loopback by default)")
	f.IntVar(&cfg.MaxBatch, "max-batch", 64, "pairs gathered into one shared run")
	f.DurationVar(&cfg.MaxWait, "max-wait", 5*time.Millisecond, "longest wait for more pairs before a run")
	f.IntVar(&cfg.MaxInflight, "max-inflight", 32, "requests worked on at once; more get 503 busy")
	f.Int64Var(&cfg.MaxBodyBytes, "max-body-bytes", 4<<20, "request body limit")
	f.IntVar(&cfg.MaxReplies, "max-replies", 1024, "replies per request")
	f.IntVar(&cfg.MaxFacts, "max-facts", 256, "facts per profile")
	f.IntVar(&cfg.MaxChars, "max-reply-chars", gainsay.DefaultMaxReplyChars, "characters per reply; longer ones become error records")
	f.Float64Var(&cfg.Threshold, "threshold", gainsay.DefaultThreshold, "default contradiction threshold (a request may set its own)")
	f.StringVar(&occlusion, "occlusion", string(nli.Delete), "how attribution leaves a word out: delete or mask")
	f.Float64Var(&cfg.Spans.MinWeight, "span-min-weight", gainsay.DefaultSpanRule().MinWeight, "least drop in contradiction probability for a word to be penalised")
	f.Float64Var(&cfg.Spans.Relative, "span-relative", gainsay.DefaultSpanRule().Relative, "least share of the strongest word's drop for a word to be penalised")
	f.DurationVar(&grace, "grace", 30*time.Second, "how long shutdown waits for requests in flight")
	f.BoolVar(&cfg.OneWay, "one-way", false, "read each pair only as fact then sentence (see gainsay help check)")
	return c
}
