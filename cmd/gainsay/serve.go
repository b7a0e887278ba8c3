package main

import (
	"fmt"
	"net"
	"net/http"
	"os/signal"
	"syscall"
	"time"

	"github.com/spf13/cobra"

	"github.com/gainsay/gainsay"
	"github.com/gainsay/gainsay/serve"
)

func newServeCmd() *cobra.Command {
	var (
		mf                                modelFlags
		cf                                checkFlags
		addr                              string
		cfg                               serve.Config
		grace, readTimeout, headerTimeout time.Duration
		idleTimeout                       time.Duration
	)
	c := &cobra.Command{
		Use:   "serve",
		Short: "Keep the model loaded and score replies over HTTP for a live training loop",
		Long: `serve listens (on loopback by default) and answers:

  POST /v1/check  {"profile": {"character", "facts": [{"id", "text"}]}, "replies": [{"id", "text"}], "threshold"?}
                  -> {"model", "records": [...]}, one record per reply, as gainsay check writes them
  GET  /healthz   -> {"status": "ok", "model", "inflight", ...}

Concurrent requests share ONNX Runtime runs (at most --max-batch pairs, gathered for at most --max-wait).
At most --max-inflight requests are worked on at once; others get 503 with Retry-After. A request's body
is read in full (within --read-timeout) before it takes one of those slots, so a client that stalls
cannot hold one. Bodies over --max-body-bytes get 413, a content type other than JSON 415, anything
after the JSON object 400. On SIGINT or SIGTERM the service stops accepting, finishes the requests in
flight for up to --grace, answers those still running 503, and exits 0 within about a second more.`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			var err error
			if cfg.Check, err = cf.options(""); err != nil {
				return err
			}
			cfg.OneWay = cf.oneWay
			model, name, err := mf.open(cmd)
			if err != nil {
				return err
			}
			defer model.Close()
			if e, err := cf.embedder(cmd); err != nil {
				return err
			} else if e != nil {
				defer e.Close()
				cfg.Embedder = e
			}
			ln, err := net.Listen("tcp", addr)
			if err != nil {
				return unusable(err)
			}
			svc := serve.New(model, name, cfg)
			srv := &http.Server{Handler: svc.Handler(), ReadHeaderTimeout: headerTimeout, ReadTimeout: readTimeout,
				IdleTimeout: idleTimeout}
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
			fmt.Fprintf(cmd.ErrOrStderr(), "gainsay: shutting down, finishing requests in flight (for up to %v)\n", grace)
			if err := svc.Shutdown(srv, grace); err != nil {
				return err
			}
			fmt.Fprintln(cmd.ErrOrStderr(), "gainsay: stopped")
			return nil
		},
	}
	mf.register(c)
	cf.register(c)
	f := c.Flags()
	f.StringVar(&addr, "addr", "127.0.0.1:8734", "address to listen on (loopback by default)")
	f.IntVar(&cfg.MaxBatch, "max-batch", 64, "pairs gathered into one shared run")
	f.DurationVar(&cfg.MaxWait, "max-wait", 5*time.Millisecond, "longest wait for more pairs before a run")
	f.IntVar(&cfg.MaxInflight, "max-inflight", 32, "requests worked on at once; more get 503 busy")
	f.Int64Var(&cfg.MaxBodyBytes, "max-body-bytes", 4<<20, "request body limit")
	f.IntVar(&cfg.MaxReplies, "max-replies", 1024, "replies per request")
	f.IntVar(&cfg.MaxFacts, "max-facts", 256, "facts per profile")
	f.IntVar(&cfg.MaxChars, "max-reply-chars", gainsay.DefaultMaxReplyChars, "characters per reply; longer ones become error records")
	f.DurationVar(&grace, "grace", 30*time.Second, "how long shutdown waits for requests in flight before answering them 503")
	f.DurationVar(&readTimeout, "read-timeout", 30*time.Second, "longest time to read a whole request, body included")
	f.DurationVar(&headerTimeout, "read-header-timeout", 10*time.Second, "longest time to read a request's headers")
	f.DurationVar(&idleTimeout, "idle-timeout", 60*time.Second, "how long an idle keep-alive connection stays open")
	return c
}
