;;; markwell with lsp-mode (8.0 or later). -*- lexical-binding: t -*-
;; Add to your init file. `*.chart.json' files open in `chartspec-mode' (a JSON mode), and
;; `M-x lsp' (or the hook below) starts `markwell serve' for them. The server is chosen by the
;; file name, so other JSON files keep their own servers.

(require 'js)
(unless (fboundp 'chartspec-mode)
  ;; Emacs 29 has `js-json-mode'; Emacs 28 only `js-mode'
  (if (fboundp 'js-json-mode)
      (define-derived-mode chartspec-mode js-json-mode "ChartSpec"
        "Major mode for markwell chart specs (JSON).")
    (define-derived-mode chartspec-mode js-mode "ChartSpec"
      "Major mode for markwell chart specs (JSON).")))

(add-to-list 'auto-mode-alist '("\\.chart\\.json\\'" . chartspec-mode))

(with-eval-after-load 'lsp-mode
  ;; the language id sent in didOpen
  (add-to-list 'lsp-language-id-configuration '(chartspec-mode . "chartspec"))
  (lsp-register-client
   (make-lsp-client
    :new-connection (lsp-stdio-connection '("markwell" "serve"))   ; or an absolute path
    :activation-fn (lambda (file-name _mode)
                     (and file-name (string-match-p "\\.chart\\.json\\'" file-name)))
    :priority 1
    :server-id 'markwell
    ;; the `markwell' section of workspace/configuration
    :initialized-fn (lambda (workspace)
                      (with-lsp-workspace workspace
                        (lsp--set-configuration
                         (lsp-configuration-section "markwell")))))))

(autoload 'lsp-deferred "lsp-mode" nil t)   ; in case the package manager did not
(add-hook 'chartspec-mode-hook #'lsp-deferred)
