;;; rill-eglot-e2e.el --- rill-mode with eglot against a rill language server  -*- lexical-binding: t; -*-

;;; Commentary:

;; Opens a copy of examples/larkspur-east.rill with a deliberate unit error
;; in rill-mode, connects eglot through `eglot-server-programs' (what
;; rill-mode registers), waits for the diagnostics and asks for a hover.
;; $RILL_LSP_CMD is the server command line (split on spaces) and
;; $RILL_EXPECT_CODE the code expected on the broken line (default
;; unit.dimension).  Needs eglot (Emacs 29, or Debian's elpa-eglot).
;; Run: emacs --batch -Q -L editors/emacs -l editors/emacs/test/rill-eglot-e2e.el

;;; Code:

(require 'rill-mode)
(require 'eglot)
(require 'flymake)
(require 'json)

(defvar rill-e2e--dir (file-name-directory (or load-file-name buffer-file-name)))

(defun rill-e2e--fail (fmt &rest args)
  (princ (format "emacs eglot check FAILED: %s\n" (apply #'format fmt args)))
  (kill-emacs 1))

(defun rill-e2e--wait (what pred seconds)
  "Process events until PRED is non-nil or SECONDS pass; fail with WHAT."
  (let ((deadline (+ (float-time) seconds)) value)
    (while (and (not (setq value (funcall pred))) (< (float-time) deadline))
      (accept-process-output nil 0.1))
    (or value (rill-e2e--fail "no %s within %s s" what seconds))))

(let* ((repo (expand-file-name "../../.." rill-e2e--dir))
       (cmd (getenv "RILL_LSP_CMD"))
       (expect (or (getenv "RILL_EXPECT_CODE") "unit.dimension"))
       (dir (make-temp-file "rill-eglot-" t))
       (deck (expand-file-name "larkspur-east.rill" dir))
       (text (with-temp-buffer
               (insert-file-contents (expand-file-name "examples/larkspur-east.rill" repo))
               (buffer-string)))
       (broken (replace-regexp-in-string "kx = layers \\[150 40 300 90\\] md" "kx = 150 psi" text t t))
       (broken-line (with-temp-buffer
                      (insert broken)
                      (goto-char (point-min))
                      (and (search-forward "kx = 150 psi" nil t) (line-number-at-pos)))))
  ;; rill-e2e--fail leaves through kill-emacs, past any unwind-protect.
  (add-hook 'kill-emacs-hook (lambda () (ignore-errors (delete-directory dir t))))
  (unwind-protect
      (progn
        (unless broken-line (rill-e2e--fail "examples/larkspur-east.rill has no kx line to break"))
        (when (and cmd (not (string-empty-p cmd)))
          (setq rill-lsp-command (split-string cmd " " t)))
        (with-temp-file deck (insert broken))
        ;; Project settings the way eglot reads them: directory-local.
        (with-temp-file (expand-file-name ".dir-locals.el" dir)
          (prin1 '((rill-mode . ((eglot-workspace-configuration
                                  . (:rill (:inlayHints (:enabled :json-false)
                                            :allowedIncludePaths ["/data/shared"]
                                            :runOutputDir "runs"))))))
                 (current-buffer)))
        (find-file deck)
        (unless (eq major-mode 'rill-mode) (rill-e2e--fail "major mode is %s" major-mode))
        ;; What M-x eglot does, without the prompts: the contact comes from
        ;; `eglot-server-programs'.
        (apply #'eglot (append (eglot--guess-contact) nil))
        (rill-e2e--wait "eglot connection" (lambda () (eglot-current-server)) 30)
        (flymake-start)
        (let* ((diags (rill-e2e--wait
                       "diagnostics"
                       (lambda () (flymake-start) (flymake-diagnostics))
                       30))
               (found nil))
          (dolist (d diags)
            (let ((line (line-number-at-pos (flymake-diagnostic-beg d))))
              (princ (format "%s:%d: %s %s\n" (file-name-nondirectory deck) line
                             (flymake-diagnostic-type d) (flymake-diagnostic-text d)))
              (when (and (= line broken-line) (string-match-p (regexp-quote expect) (flymake-diagnostic-text d)))
                (setq found t))))
          (unless found (rill-e2e--fail "no %s diagnostic on line %d" expect broken-line)))
        ;; A hover on the key `viscosity'.
        (goto-char (point-min))
        (search-forward "viscosity =")
        (goto-char (+ (match-beginning 0) 2))
        (let* ((server (eglot-current-server))
               (hover (jsonrpc-request server :textDocument/hover
                                       (eglot--TextDocumentPositionParams)
                                       :timeout 30))
               (contents (and hover (plist-get hover :contents))))
          (unless contents (rill-e2e--fail "empty hover on viscosity"))
          (princ (format "hover on viscosity: %s\n" (truncate-string-to-width (format "%s" contents) 120))))
        ;; With the stand-in server ($RILL_STAND_IN=1): what it was sent.
        (when (equal (getenv "RILL_STAND_IN") "1")
          (let* ((seen (jsonrpc-request (eglot-current-server) :rillTest/seen nil :timeout 10))
                 (init (json-encode (plist-get seen :initializationOptions)))
                 (changes (plist-get seen :configurationChanges)))
            (princ (format "initializationOptions: %s\n" init))
            (unless (equal init "{\"inlayHints\":{\"enabled\":true},\"allowedIncludePaths\":[],\"runOutputDir\":null}")
              (rill-e2e--fail "unexpected initializationOptions %s" init))
            (princ (format "didChangeConfiguration: %s\n" (json-encode changes)))
            (unless (and (> (length changes) 0)
                         (equal (json-encode (aref changes 0))
                                "{\"rill\":{\"inlayHints\":{\"enabled\":false},\"allowedIncludePaths\":[\"/data/shared\"],\"runOutputDir\":\"runs\"}}"))
              (rill-e2e--fail "settings not pushed under the section rill: %s" (json-encode changes)))))
        (princ "emacs eglot check passed\n"))
    (ignore-errors (eglot-shutdown (eglot-current-server)))
    (delete-directory dir t)))

(kill-emacs 0)
;;; rill-eglot-e2e.el ends here
