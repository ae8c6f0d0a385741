;;; rill-mode.el --- Major mode for rill reservoir case files  -*- lexical-binding: t; -*-

;; Copyright (C) 2026 the rill authors
;; SPDX-License-Identifier: MIT
;; Version: 0.1.0
;; Package-Requires: ((emacs "27.1"))
;; Keywords: languages

;;; Commentary:

;; Highlighting, comments and indentation for rill case files (*.rill), and
;; the rill language server (`rill lsp') for eglot and lsp-mode.
;;
;;   (add-to-list 'load-path "/path/to/rill/editors/emacs")
;;   (require 'rill-mode)
;;   (add-hook 'rill-mode-hook #'eglot-ensure)   ; or #'lsp
;;
;; `rill-lsp-command' names the binary; `rill-lsp-settings' are sent as
;; initializationOptions (and, with lsp-mode, under the section `rill').

;;; Code:

(defgroup rill nil
  "Editing rill case files."
  :group 'languages
  :prefix "rill-")

(defcustom rill-lsp-command '("rill" "lsp")
  "Command line of the rill language server."
  :type '(repeat string))

(defcustom rill-lsp-settings
  '(:inlayHints (:enabled t) :allowedIncludePaths [] :runOutputDir nil)
  "Settings of the rill language server, as a JSON-like plist.
Sent as initializationOptions and as the `rill' section of the
workspace configuration.  An empty vector is a JSON array, nil is null
and :json-false is false."
  :type 'sexp)

(defcustom rill-indent-offset 2
  "Indentation of a nested block."
  :type 'integer)

(defconst rill-block-names
  '("case" "grid" "rock" "fluid" "oil" "water" "relperm" "initial" "well" "boundary" "fault"
    "aquifer" "timeline" "report" "patch" "at" "include")
  "Block names of the case language.")

(defconst rill-enum-values
  '("producer" "injector" "west" "east" "south" "north" "top" "bottom"
    "transient" "steady" "field" "metric" "si" "rate" "bhp"
    "oil_rate" "liquid_rate" "water_rate" "corey" "table" "layers"
    "cells" "columns" "file")
  "Enumerated values and value forms.")

(defconst rill--unit-regexp
  ;; term (("*" | "/") term)*, term = name ("^" int)? | "1" | "(" ... ")";
  ;; a leading "1" needs an operator after it (1/psi), so that a list of
  ;; numbers never reads as number-and-unit.
  (let* ((name "\\(?:[A-Za-z][A-Za-z0-9_]*\\|%\\)")
         (term (concat name "\\(?:\\^-?[0-9]+\\)?"))
         (op (concat "[*/]\\(?:" term "\\|1\\|([^()\n]*)\\)")))
    (concat "\\(?:" term "\\(?:" op "\\)*\\|1\\(?:" op "\\)+\\)"))
  "A unit expression.")

(defconst rill--number-regexp
  "-?\\(?:[0-9]+\\(?:\\.[0-9]+\\|\\.\\(?:[^.]\\|$\\)\\@<=\\)?\\|\\.[0-9]+\\)\\(?:[eE][-+]?[0-9]+\\)?"
  "A number.")

(defun rill--not-key (regexp)
  "Matcher for REGEXP where what follows the match is not `='.
Emacs regexps have no lookahead, hence a function."
  (lambda (limit)
    (let (found)
      (while (and (not found) (re-search-forward regexp limit t))
        (unless (looking-at "[ \t]*=")
          (setq found t)))
      found)))

(defun rill--unit-after (prefix)
  "Matcher for a unit expression right after PREFIX.
PREFIX is a regexp for what comes before (a number, a `]', a file string).
The unit is not followed by `=' (that would be a key) and is not `at' or `x'."
  (let ((re (concat prefix "[ \t]*\\(" rill--unit-regexp "\\)")))
    (lambda (limit)
      (let (found)
        (while (and (not found) (re-search-forward re limit t))
          (unless (or (member (match-string 1) '("at" "x"))
                      (looking-at "[A-Za-z0-9_]\\|[ \t]*="))
            (setq found t)))
        found))))

(defconst rill-font-lock-keywords
  `(;; Block names at the start of a statement.
    (,(rill--not-key (concat "\\(?:^\\|[{;]\\)[ \t]*\\_<\\(" (regexp-opt rill-block-names) "\\)\\_>"))
     1 'rill-block-face)
    ;; Keys before `='.
    ("\\_<\\([A-Za-z][A-Za-z0-9_]*\\)[ \t]*=" 1 'rill-key-face)
    ;; Sizes (30 x 20 x 4) and ranges (1..5) before plain numbers.
    ("\\_<\\([0-9]+\\)[ \t]*\\(x\\)[ \t]*\\([0-9]+\\)\\(?:[ \t]*\\(x\\)[ \t]*\\([0-9]+\\)\\)?\\_>"
     (1 'rill-number-face) (2 'rill-operator-face) (3 'rill-number-face)
     (4 'rill-operator-face nil t) (5 'rill-number-face nil t))
    ("\\_<\\([0-9]+\\)\\(\\.\\.\\)\\([0-9]+\\)\\_>"
     (1 'rill-number-face) (2 'rill-operator-face) (3 'rill-number-face))
    ;; Units after a number, a `]' or a file "..." string.
    (,(rill--unit-after (concat "\\(?:[^A-Za-z0-9_.]\\|^\\)" rill--number-regexp))
     1 'rill-unit-face)
    (,(rill--unit-after "\\]") 1 'rill-unit-face)
    (,(rill--unit-after "\\_<file[ \t]*\"\\(?:[^\"\\\\\n]\\|\\\\.\\)*\"") 1 'rill-unit-face)
    (,(concat "\\(?:^\\|[^A-Za-z0-9_.]\\)\\(" rill--number-regexp "\\)") 1 'rill-number-face)
    ;; Enumerated values (not keys).
    (,(rill--not-key (concat "\\_<\\(" (regexp-opt rill-enum-values) "\\)\\_>")) 1 'rill-enum-face)
    ("\\_<at\\_>" . 'rill-keyword-face)
    ("[=*/+-]" . 'rill-operator-face))
  "Font-lock rules of `rill-mode'.")

(defface rill-block-face '((t :inherit font-lock-keyword-face))
  "Block names: grid, rock, well, ...")
(defface rill-key-face '((t :inherit font-lock-variable-name-face))
  "Keys before `='.")
(defface rill-unit-face '((t :inherit font-lock-type-face))
  "Unit expressions.")
(defface rill-number-face '((t :inherit font-lock-constant-face))
  "Numbers.")
(defface rill-enum-face '((t :inherit font-lock-builtin-face))
  "Enumerated values: producer, east, transient, ...")
(defface rill-keyword-face '((t :inherit font-lock-keyword-face))
  "The datum word `at' inside a value.")
(defface rill-operator-face '((t :inherit font-lock-preprocessor-face))
  "Operators: = * / + - .. x")

(defvar rill-mode-syntax-table
  (let ((st (make-syntax-table)))
    (modify-syntax-entry ?# "<" st)
    (modify-syntax-entry ?\n ">" st)
    (modify-syntax-entry ?\" "\"" st)
    (modify-syntax-entry ?\\ "\\" st)
    (modify-syntax-entry ?_ "_" st)
    (modify-syntax-entry ?{ "(}" st)
    (modify-syntax-entry ?} "){" st)
    (modify-syntax-entry ?\[ "(]" st)
    (modify-syntax-entry ?\] ")[" st)
    (modify-syntax-entry ?\( "()" st)
    (modify-syntax-entry ?\) ")(" st)
    (dolist (c '(?= ?* ?/ ?+ ?- ?^ ?% ?\; ?,))
      (modify-syntax-entry c "." st))
    st)
  "Syntax table of `rill-mode'.")

(defun rill-indent-line ()
  "Indent the current line by the depth of open brackets."
  (interactive)
  (let* ((depth (save-excursion (car (syntax-ppss (line-beginning-position)))))
         (closing (save-excursion
                    (back-to-indentation)
                    (looking-at "[]})]")))
         (column (* rill-indent-offset (max 0 (- depth (if closing 1 0))))))
    (if (<= (current-column) (current-indentation))
        (indent-line-to column)
      (save-excursion (indent-line-to column)))))

;;;###autoload
(define-derived-mode rill-mode prog-mode "rill"
  "Major mode for rill case files."
  :syntax-table rill-mode-syntax-table
  (setq-local comment-start "# ")
  (setq-local comment-start-skip "#+[ \t]*")
  (setq-local comment-end "")
  (setq-local indent-line-function #'rill-indent-line)
  (setq-local indent-tabs-mode nil)
  (setq-local font-lock-defaults '(rill-font-lock-keywords nil nil)))

;;;###autoload
(add-to-list 'auto-mode-alist '("\\.rill\\'" . rill-mode))

;;; Language server

(defun rill-lsp-settings-for-section ()
  "The workspace configuration: `rill-lsp-settings' under the section `rill'."
  (list :rill rill-lsp-settings))

;; eglot: built in from Emacs 29, a package before.
(defun rill--eglot-contact (&optional _interactive)
  "The eglot contact: `rill-lsp-command' with `rill-lsp-settings'.
A function, so that changes to the options after eglot is loaded count."
  `(,@rill-lsp-command :initializationOptions ,rill-lsp-settings))

;; Settings reach the server as initializationOptions.  To change them for
;; one project while the server runs, eglot reads directory-local values:
;;   ((rill-mode . ((eglot-workspace-configuration
;;                   . (:rill (:inlayHints (:enabled :json-false)))))))
;; in .dir-locals.el, then M-x eglot-signal-didChangeConfiguration.
(with-eval-after-load 'eglot
  (defvar eglot-server-programs)
  (add-to-list 'eglot-server-programs '(rill-mode . rill--eglot-contact)))

;; lsp-mode.
(with-eval-after-load 'lsp-mode
  (declare-function lsp-register-client "lsp-mode")
  (declare-function make-lsp-client "lsp-mode")
  (declare-function lsp-stdio-connection "lsp-mode")
  (declare-function lsp--set-configuration "lsp-mode")
  (defvar lsp-language-id-configuration)
  (defvar lsp--cur-workspace)
  (add-to-list 'lsp-language-id-configuration '(rill-mode . "rill"))
  (lsp-register-client
   (make-lsp-client
    :new-connection (lsp-stdio-connection (lambda () rill-lsp-command))
    :activation-fn (lambda (_file mode) (eq mode 'rill-mode))
    :initialization-options (lambda () rill-lsp-settings)
    :initialized-fn (lambda (workspace)
                      ;; What `with-lsp-workspace' does, without needing the
                      ;; macro at compile time.
                      (let ((lsp--cur-workspace workspace))
                        (lsp--set-configuration (rill-lsp-settings-for-section))))
    :server-id 'rill-lsp)))

(declare-function eglot-current-server "eglot")
(declare-function eglot-execute-command "eglot")
(declare-function lsp-workspaces "lsp-mode")
(declare-function lsp-send-execute-command "lsp-mode")

(defun rill-run-case ()
  "Run the current case through the server's `rill.run' command."
  (interactive)
  (let ((uri (concat "file://" (expand-file-name (buffer-file-name)))))
    (cond
     ((and (fboundp 'eglot-current-server) (eglot-current-server))
      (eglot-execute-command (eglot-current-server) "rill.run" (vector uri)))
     ((and (fboundp 'lsp-workspaces) (lsp-workspaces))
      (lsp-send-execute-command "rill.run" (vector uri)))
     (t (user-error "No rill language server for this buffer; M-x eglot or M-x lsp first")))))

(define-key rill-mode-map (kbd "C-c C-r") #'rill-run-case)

(provide 'rill-mode)
;;; rill-mode.el ends here
