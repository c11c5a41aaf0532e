;;; markwell with Eglot (Emacs 28 with the elpa-eglot package, or Emacs 29+ built-in). -*- lexical-binding: t -*-
;; Add to your init file. `*.chart.json' files open in `chartspec-mode' (a JSON mode), and
;; `M-x eglot' (or the hook below) starts `markwell serve' for them.

(require 'js)
;; Emacs 29 has `js-json-mode'; Emacs 28 only `js-mode'
(if (fboundp 'js-json-mode)
    (define-derived-mode chartspec-mode js-json-mode "ChartSpec"
      "Major mode for markwell chart specs (JSON).")
  (define-derived-mode chartspec-mode js-mode "ChartSpec"
    "Major mode for markwell chart specs (JSON)."))

(add-to-list 'auto-mode-alist '("\\.chart\\.json\\'" . chartspec-mode))

(with-eval-after-load 'eglot
  ;; the language id sent in didOpen is derived from the mode name: "chartspec"
  (add-to-list 'eglot-server-programs '(chartspec-mode . ("markwell" "serve")))
  ;; settings for the `markwell' section of workspace/configuration, added to what is there:
  ;; the sections of other servers stay as they are.  The value may be a plist
  ;; (:SECTION VALUE ...), an alist ((SECTION . VALUE) ...) as older Eglot had it, or a function
  ;; of the server returning either (newer Eglot).
  (defun markwell-eglot--add-section (configuration)
    "CONFIGURATION with the `markwell' section set; other sections kept."
    (let ((section '(:rules (:sparse-column "warning"))))
      (cond
       ((and (consp configuration) (consp (car configuration)))   ; alist
        (cons (cons :markwell section)
              (assq-delete-all :markwell (copy-sequence configuration))))
       (t (plist-put (copy-sequence configuration) :markwell section)))))
  (let ((current (default-value 'eglot-workspace-configuration)))
    (setq-default eglot-workspace-configuration
                  (if (functionp current)
                      (lambda (server)
                        (markwell-eglot--add-section (funcall current server)))
                    (markwell-eglot--add-section current)))))

(autoload 'eglot-ensure "eglot" nil t)     ; in case the package manager did not
(add-hook 'chartspec-mode-hook #'eglot-ensure)
