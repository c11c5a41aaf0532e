;;; shipped_emacs_probe.el --- watch a shipped Emacs set-up at work  -*- lexical-binding: t -*-
;; Run after the shipped file from editor-configs/ was loaded, unchanged:
;;   emacs --batch -l editor-configs/emacs-eglot.el -l shipped_emacs_probe.el
;; Env: LSP_TEST_FILE (the spec), LSP_OUT (JSON written here), LSP_CLIENT ("eglot" or
;; "lsp-mode"), LSP_TIMEOUT_MS.  The probe opens the file as a user would; the set-up must pick
;; the mode by the file name and start the server.  What the probe does in place of a person:
;; it runs the command loop's post-command hook once (Eglot's `eglot-ensure' connects there)
;; or calls `M-x lsp' (lsp-mode's deferred start waits for a visible window, which batch mode
;; has none of), it starts Flymake's first check (deferred to a displayed window too), and it answers lsp-mode's question about the project root in advance.
;; Writes {mode, connected, diagnostics: [{message, line, col}]}; exit 0 written, 2 errored.

(require 'json)
(require 'cl-lib)

(defun probe-wait (pred timeout-s)
  (let ((deadline (+ (float-time) timeout-s)) v)
    (while (and (not (setq v (funcall pred))) (< (float-time) deadline))
      (accept-process-output nil 0.05))
    v))

(defun probe-main ()
  (let* ((file (expand-file-name (getenv "LSP_TEST_FILE")))
         (out (expand-file-name (getenv "LSP_OUT")))
         (client (getenv "LSP_CLIENT"))
         (timeout-s (/ (string-to-number (or (getenv "LSP_TIMEOUT_MS") "10000")) 1000.0))
         (buf (progn
                (when (equal client "lsp-mode")
                  (require 'lsp-mode)
                  (setq lsp-auto-guess-root t
                        lsp-session-file (expand-file-name "lsp-session" temporary-file-directory)
                        lsp-enable-file-watchers nil
                        lsp-restart 'ignore
                        lsp-enable-snippet nil))
                (find-file-noselect file)))
         connected diagnostics mode)
    (with-current-buffer buf
      (setq mode (symbol-name major-mode))
      (if (equal client "eglot")
          (progn
            (run-hooks 'post-command-hook)
            (setq connected (probe-wait (lambda () (and (fboundp 'eglot-current-server)
                                                        (eglot-current-server)))
                                        timeout-s))
            ;; Flymake defers its first check to the command loop of a displayed buffer
            (when (bound-and-true-p flymake-mode) (flymake-start nil t)))
        (lsp)
        (setq connected (probe-wait (lambda () (and (bound-and-true-p lsp-mode)
                                                    (lsp-workspaces)))
                                    timeout-s)))
      (probe-wait
       (lambda ()
         (setq diagnostics
               (if (equal client "eglot")
                   (mapcar (lambda (d)
                             (list :message (flymake-diagnostic-text d)
                                   :line (line-number-at-pos (flymake-diagnostic-beg d) t)))
                           (flymake-diagnostics))
                 (let (all)
                   (maphash (lambda (path diags)
                              (when (equal (file-truename path) (file-truename file))
                                (dolist (d diags)
                                  (push (list :message (lsp:diagnostic-message d)
                                              :code (lsp:diagnostic-code? d)
                                              :line (1+ (lsp:position-line
                                                         (lsp:range-start (lsp:diagnostic-range d)))))
                                        all))))
                            (lsp-diagnostics t))
                   all))))
       timeout-s)
      (with-temp-file out
        (insert (json-encode (list :mode mode
                                   :connected (if connected t :json-false)
                                   :diagnostics (vconcat diagnostics))))))))

(condition-case err
    (progn (probe-main) (kill-emacs 0))
  (error (princ (format "[shipped-emacs-probe] %S\n" err) #'external-debugging-output)
         (kill-emacs 2)))
